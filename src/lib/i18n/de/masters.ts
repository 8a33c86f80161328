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
		signatureUnbound: 'Stimmt nicht überein: Diese Unterschrift wurde für einen anderen Inhalt geleistet als die jetzt gezeigte Version (21 CFR 11.70).',
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
	errors: {
		invalid: 'Die Eingabe hat Fehler; nichts wurde gespeichert.',
		forbidden: 'Ihre Rollen erlauben das nicht.',
		'own-version': 'Sie haben diese Version geschrieben: Eine zweite Person muss sie genehmigen (21 CFR 211.186(a)).',
		'not-found': 'Diese Herstellungsvorschrift gibt es nicht.',
		'wrong-state': 'Der Status der Version erlaubt das jetzt nicht.',
		'open-version': 'Dieses Produkt hat schon eine Version im Entwurf, in Prüfung oder genehmigt, aber noch nicht gültig.',
		'code-taken': 'Für diesen Produktcode gibt es schon Herstellungsvorschriften: Beginnen Sie stattdessen eine neue Version.',
		stale: 'Jemand anderes hat diesen Entwurf inzwischen gespeichert. Laden Sie ihn neu; Ihre Änderungen wurden nicht gespeichert.',
		'duplicate-number': 'Diese Chargennummer ist schon vergeben. Es wurde nichts ausgegeben.',
		'reason-required': 'Geben Sie eine Begründung an.',
		integrity: 'Der gespeicherte Inhalt passt nicht mehr zu seinem Hash: Er kann nicht unterschrieben oder ausgegeben werden. Informieren Sie die QA.',
		'too-large': 'Die Anfrage ist zu groß; nichts wurde gespeichert.'
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
