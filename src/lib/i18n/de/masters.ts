import type { masters as en } from '../en/masters';
import type { DeepPartial } from '../types';

/** Masters in German: the list, states, lifecycle actions and issuance; the editor falls back to English. */
export const masters: DeepPartial<typeof en> = {
	title: 'Herstellungsvorschriften (Master Batch Records)',
	intro: 'Die Vorschrift jedes Produkts in Versionen. Nur ein Entwurf wird bearbeitet; eine freigegebene Version ändert sich nie. Nur die gültige Version wird ausgegeben.',
	newMaster: 'Neue Herstellungsvorschrift',
	importTitle: 'Vorlage importieren',
	importSubmit: 'Als Entwurf importieren',
	empty: 'Noch keine Herstellungsvorschriften.',
	columns: { code: 'Produktcode', product: 'Produkt', version: 'Version', status: 'Status', effective: 'Gültig seit', hash: 'Inhalts-Hash' },
	statuses: {
		draft: 'Entwurf',
		'in-review': 'In Prüfung',
		approved: 'Genehmigt',
		effective: 'Gültig',
		superseded: 'Ersetzt',
		retired: 'Zurückgezogen'
	},
	versionLabel: (p: { version: number }) => `Version ${p.version}`,
	detail: {
		back: 'Alle Herstellungsvorschriften',
		header: 'Produkt',
		strength: 'Stärke',
		dosageForm: 'Darreichungsform',
		batchSize: 'Nominale Chargengröße',
		theoreticalYield: 'Theoretische Ausbeute',
		signatures: 'Unterschriften',
		noSignatures: 'Noch nicht unterschrieben.',
		procedure: 'Ablauf',
		actions: 'Was Sie tun können',
		edit: 'Entwurf bearbeiten',
		submit: 'Zur Prüfung einreichen',
		approve: 'Genehmigen',
		return: 'Zurück in den Entwurf',
		makeEffective: 'In Kraft setzen',
		retire: 'Zurückziehen',
		newVersion: 'Neue Version beginnen',
		issue: 'Chargenprotokoll ausgeben',
		export: 'Exportieren (JSON)',
		compare: 'Mit anderer Version vergleichen',
		reason: 'Begründung',
		confirm: 'Bestätigen',
		cancel: 'Abbrechen'
	},
	diff: {
		title: 'Versionen vergleichen',
		from: 'Ältere',
		to: 'Neuere',
		show: 'Vergleichen',
		kinds: { added: 'Hinzugefügt', removed: 'Entfernt', changed: 'Geändert', moved: 'Verschoben' },
		before: 'Vorher',
		after: 'Nachher'
	},
	issue: {
		title: 'Chargenprotokoll ausgeben',
		number: 'Chargennummer',
		size: 'Tatsächliche Chargengröße',
		quantities: 'Mengen bei dieser Chargengröße',
		submit: 'Ausgeben und unterschreiben',
		numbering: 'Format der Chargennummern'
	}
};
