import type { en } from '../en';
import type { DeepPartial } from '../types';

/** German for the floor screens; what is missing falls back to English. */
export const batches: DeepPartial<typeof en.batches> = {
	list: { title: 'Chargen', number: 'Charge', product: 'Produkt', status: 'Status', progress: 'Fortschritt', issued: 'Ausgegeben', deviations: 'Offene Abweichungen', open: 'Öffnen' },
	status: { issued: 'Ausgegeben', 'in-progress': 'In Arbeit', 'awaiting-review': 'Zur Prüfung', released: 'Freigegeben', rejected: 'Zurückgewiesen' },
	states: { 'not-started': 'Nicht begonnen', 'in-progress': 'In Arbeit', performed: 'Durchgeführt', verified: 'Verifiziert', 'needs-attention': 'Braucht Aufmerksamkeit' },
	step: { back: 'Zurück zur Charge', comment: 'Kommentar', signPerform: 'Als durchgeführt signieren', signVerify: 'Verifizieren', correct: 'Eintrag korrigieren', late: 'Nachtrag', outOfLimits: 'Außerhalb der Grenzen', signatureUnbound: 'Signatur passt nicht: dieser Eintrag ist nicht, was signiert wurde.', verificationUnbound: 'Verifizierung passt nicht: Eintrag oder Signatur ist nicht, was verifiziert wurde.' },
	page: { unboundSignatures: (p: { n: number }) => `${p.n} Signatur${p.n === 1 ? ' passt' : 'en passen'} nicht zum signierten Datensatz: er wurde möglicherweise verändert. QA informieren.`, issueUnbound: 'Die Ausgabesignatur passt nicht zu diesem Chargenprotokoll.' },
	errors: {
		'stale-version': 'Jemand anderes hat diese Charge geändert. Nichts wurde gespeichert; die Seite zeigt jetzt den neuesten Stand.',
		'out-of-order': 'Frühere Schritte kommen zuerst.',
		'comment-required': 'Ein Wert liegt außerhalb der Grenzen: bitte kommentieren.',
		'reason-required': 'Eine Korrektur braucht einen Grund.',
		'own-entry': 'Den eigenen Eintrag kann man nicht verifizieren.',
		'batch-closed': 'Diese Charge ist abgeschlossen.',
		'not-found': 'Diese Charge oder dieser Schritt existiert nicht.',
		'invalid-input': 'Der Eintrag konnte nicht gelesen werden. Seite neu laden und erneut versuchen.',
		'invalid-values': 'Einige Werte sind ungültig: markierte Felder korrigieren.',
		'unknown-reason': 'Dieser Grund wird nicht mehr verwendet: einen anderen wählen.',
		'already-performed': 'Dieser Schritt wurde inzwischen durchgeführt: stattdessen den neuesten Eintrag korrigieren.',
		'not-performed': 'Dieser Schritt wurde noch nicht durchgeführt.',
		'not-critical': 'Dieser Schritt braucht keine Verifizierung.',
		'already-verified': 'Dieser Schritt ist bereits verifiziert.',
		'wrong-role': 'Ihre Rollen erfassen diesen Schritt nicht.',
		'file-too-large': 'Die Datei ist zu groß.',
		'file-type-refused': 'Dateien dieses Typs werden hier nicht angenommen.',
		'late-without-time': 'Ein Nachtrag braucht die Zeit, zu der gearbeitet wurde.',
		'too-large': 'Die Anfrage ist zu groß.'
	},
	preferences: { title: 'Einstellungen', temperature: 'Temperatureinheit', pressure: 'Druckeinheit', language: 'Sprache', timeFormat: 'Zeitformat' }
};
