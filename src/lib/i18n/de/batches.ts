import type { en } from '../en';
import type { DeepPartial } from '../types';

/** German for the floor screens; what is missing falls back to English. */
export const batches: DeepPartial<typeof en.batches> = {
	list: { title: 'Chargen', number: 'Charge', product: 'Produkt', status: 'Status', progress: 'Fortschritt', issued: 'Ausgegeben', deviations: 'Offene Abweichungen', open: 'Öffnen' },
	status: { issued: 'Ausgegeben', 'in-progress': 'In Arbeit', 'awaiting-review': 'Zur Prüfung', released: 'Freigegeben', rejected: 'Zurückgewiesen' },
	states: { 'not-started': 'Nicht begonnen', 'in-progress': 'In Arbeit', performed: 'Durchgeführt', verified: 'Verifiziert', 'needs-attention': 'Braucht Aufmerksamkeit' },
	step: { back: 'Zurück zur Charge', comment: 'Kommentar', signPerform: 'Als durchgeführt signieren', signVerify: 'Verifizieren', correct: 'Eintrag korrigieren', late: 'Nachtrag', outOfLimits: 'Außerhalb der Grenzen' },
	preferences: { title: 'Einstellungen', temperature: 'Temperatureinheit', pressure: 'Druckeinheit', language: 'Sprache', timeFormat: 'Zeitformat' }
};
