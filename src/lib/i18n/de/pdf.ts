import type { pdf as en } from '../en/pdf';
import type { DeepPartial } from '../types';

/** Gedruckte Chargendokumentation und Audit-Trail-Bericht; nicht Übersetztes fällt auf Englisch zurück. */
export const pdf: DeepPartial<typeof en> = {
	page: (p: { page: number; pages: number }) => `Seite ${p.page} von ${p.pages}`,
	recordTitle: 'Ausgeführtes Chargenprotokoll',
	recordHeader: (p: { site: string; batch: string; product: string }) => `${p.site} · Chargenprotokoll ${p.batch} · ${p.product}`,
	auditTitle: 'Audit-Trail-Bericht',
	auditHeader: (p: { site: string }) => `${p.site} · Audit-Trail-Bericht`,
	footer: (p: { at: string; by: string }) => `Gedruckt ${p.at} von ${p.by} · digital signierte Kopie; das elektronische Original ist angehängt`,
	link: { record: 'Chargenprotokoll (PDF)', auditReport: 'Bericht (PDF)' },
	cover: {
		site: 'Standort',
		product: 'Produkt',
		strength: 'Stärke',
		batch: 'Chargennummer',
		batchSize: 'Chargengröße',
		master: 'Herstellvorschrift',
		snapshotHash: 'SHA-256 der eingefrorenen Vorschrift',
		status: 'Chargenstatus',
		issued: 'Ausgegeben',
		disposition: 'Entscheidung',
		dispositionComment: 'Kommentar zur Entscheidung',
		noDisposition: 'Noch keine Entscheidung signiert',
		timeZone: 'Zeitzone der Zeitangaben'
	},
	steps: {
		notPerformed: 'Nicht durchgeführt',
		field: 'Feld',
		value: 'Wert',
		limits: 'Grenzen',
		flag: 'Hinweis',
		outOfLimits: 'AUSSERHALB DER GRENZEN',
		withinLimits: 'innerhalb',
		performed: 'Durchgeführt',
		verified: 'Geprüft',
		correction: (p: { reason: string }) => `Korrektur, Grund: ${p.reason}`,
		superseded: 'Ersetzter Wert',
		changed: 'Nach der Ersterfassung geändert (Annex 11, 8.2)',
		late: 'Nachträgliche Erfassung',
		comment: 'Kommentar',
		yes: 'Ja',
		no: 'Nein'
	},
	deviations: { title: 'Abweichungen', none: 'Keine Abweichungen.', number: 'Nr.', step: 'Schritt', title2: 'Titel', status: 'Status', raised: 'Erfasst' },
	signatures: { title: 'Unterschriften', name: 'Name', meaning: 'Bedeutung', when: 'Datum und Uhrzeit', record: 'Datensatz' },
	chart: { title: 'Gefriertrocknungszyklus', hours: 'Zeit (h)' },
	audit: { appendix: 'Anhang: Audit-Trail dieser Charge', seq: 'Nr.', at: 'Wann', actor: 'Wer', action: 'Aktion', entity: 'Datensatz', change: 'Änderung und Grund' }
};
