import type { deviations as en } from '../en/deviations';
import type { DeepPartial } from '../types';

/** German, partial: the list, states and the main labels; the rest falls back to English. */
export const deviations: DeepPartial<typeof en> = {
	title: 'Abweichungen',
	raise: 'Abweichung melden',
	filters: { legend: 'Filter', status: 'Status', classification: 'Klassifizierung', kind: 'Art', text: 'Suche', batch: 'Charge', any: 'Alle', unfinished: 'Nicht abgeschlossen', apply: 'Anwenden', clear: 'Filter zurücksetzen' },
	columns: { number: 'Nummer', title: 'Titel', batch: 'Charge', step: 'Schritt', classification: 'Klasse', status: 'Status', raised: 'Gemeldet' },
	empty: 'Keine Abweichung passt zu diesen Filtern.',
	statuses: { open: 'Offen', investigating: 'In Untersuchung', 'pending-qa-approval': 'Wartet auf QS-Genehmigung', closed: 'Abgeschlossen', cancelled: 'Storniert' },
	classifications: { minor: 'Gering', major: 'Schwer', critical: 'Kritisch' },
	detail: {
		back: 'Alle Abweichungen',
		description: 'Beschreibung',
		classification: 'Klassifizierung',
		immediateAction: 'Sofortmaßnahme',
		investigation: 'Untersuchung',
		rootCause: 'Grundursache',
		impact: 'Auswirkung auf die Charge',
		capaRefs: 'CAPA-Verweise',
		history: 'Verlauf',
		signatures: 'Unterschriften',
		save: 'Änderungen speichern'
	},
	transitions: { 'start-investigation': 'Untersuchung beginnen', submit: 'Zur QS-Genehmigung einreichen', 'send-back': 'Zur weiteren Untersuchung zurückgeben', close: 'Genehmigen und abschließen', cancel: 'Abweichung stornieren' },
	reason: 'Begründung'
};
