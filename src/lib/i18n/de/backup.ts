import type { backup as en } from '../en/backup';
import type { DeepPartial } from '../types';

/** Sicherung (teilweise übersetzt; der Rest fällt auf Englisch zurück). */
export const backup: DeepPartial<typeof en> = {
	title: 'Sicherung',
	folder: 'Sicherungsordner',
	schedule: 'Zeitplan',
	scheduleOn: (p: { hours: number; keep: number }) => `Alle ${p.hours} h; die neuesten ${p.keep} Sicherungen bleiben erhalten.`,
	takeNow: 'Jetzt sichern',
	taking: 'Sicherung läuft…',
	taken: (p: { name: string }) => `Sicherung geschrieben: ${p.name}`,
	failed: 'Die Sicherung ist fehlgeschlagen; es wurde nichts geschrieben.',
	backups: 'Sicherungen im Ordner',
	none: 'Im Ordner liegen noch keine Sicherungen.',
	name: 'Datei',
	takenAt: 'Erstellt',
	size: 'Größe',
	contents: 'Inhalt',
	head: 'Ledger-Kopf',
	status: 'Manifest',
	good: 'Signatur gültig',
	goodTrusted: 'Signatur gültig, Standortschlüssel',
	goodUnknownKey: 'Signatur gültig, aber kein Schlüssel dieses Standorts',
	refused: 'Abgelehnt',
	verify: 'Alle Teile prüfen'
};
