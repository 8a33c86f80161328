import type { en } from '../en';
import type { DeepPartial } from '../types';

export const shell: DeepPartial<(typeof en)['shell']> = {
	skipToContent: 'Zum Inhalt springen',
	mainNav: 'Hauptnavigation',
	menu: 'Menü',
	signedInAs: (p) => `Angemeldet als ${p.name}`,
	signIn: 'Anmelden',
	signOut: 'Abmelden',
	profile: 'Mein Profil',
	language: 'Sprache',
	areas: {
		today: 'Heute',
		masters: 'Stammvorschriften',
		batches: 'Chargen',
		cycles: 'Zyklen',
		deviations: 'Abweichungen',
		review: 'Prüfung',
		audit: 'Audit-Trail',
		equipment: 'Anlagen',
		people: 'Personen',
		settings: 'Einstellungen',
		backup: 'Sicherung'
	},
	roles: {
		author: 'Autor',
		operator: 'Bediener',
		supervisor: 'Schichtleitung',
		qa: 'Qualitätssicherung',
		inspector: 'Inspektor',
		admin: 'Administrator'
	},
	today: {
		title: 'Heute',
		greeting: (p) => `Willkommen, ${p.name}`,
		intro: 'Was Sie jetzt braucht, nach Ihren Rollen.',
		nothing: 'Im Moment braucht Sie nichts.',
		batchesInProgress: 'Chargen in Arbeit',
		batchesIssued: 'Ausgegebene Chargen, nicht begonnen',
		batchesAwaitingReview: 'Chargen zur Prüfung',
		effectiveMasters: 'Gültige Stammvorschriften',
		draftMasters: 'Stammvorschriften im Entwurf oder in Prüfung',
		equipmentAttention: 'Anlagen mit Handlungsbedarf',
		auditHead: 'Audit-Journal',
		auditHeadValue: (p) => `${p.count} Ereignisse erfasst`,
		people: 'Konten',
		peopleValue: (p) => `${p.count} Konten`,
		open: 'Öffnen',
		batchLine: (p) => `${p.number} · ${p.product}`,
		equipmentStatus: { 'in-service': 'In Betrieb', 'out-of-service': 'Außer Betrieb', 'cleaning-due': 'Reinigung fällig' },
		calibrationOverdue: (p) => `Kalibrierung überfällig seit ${p.date}`
	},
	error: {
		title: (p) => `Fehler ${p.status}`,
		notFound: 'Diese Seite gibt es nicht.',
		notFoundHint: 'Prüfen Sie die Adresse oder gehen Sie zu „Heute“.',
		forbidden: 'Ihre Rollen erlauben das nicht.',
		unauthorised: 'Bitte melden Sie sich an.',
		generic: 'Etwas ist schiefgegangen. Es wurde nichts gespeichert.',
		home: 'Zu „Heute“'
	},
	placeholderSignIn: 'Die Anmeldung ist noch nicht verfügbar.',
	footer: (p) => `Rimebook ${p.version} · unterstützt validierte GMP-Prozesse und die Entscheidung der QS; sie ersetzt sie nicht.`
};
