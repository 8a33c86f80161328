import type { review as en } from '../en/review';
import type { DeepPartial } from '../types';

/** German: the words QA sees most; the rest falls back to English. */
export const review: DeepPartial<typeof en> = {
	queue: {
		title: 'Prüfung',
		ready: 'Bereit zur Prüfung',
		notReady: 'Noch in Ausführung: nicht bereit zur Prüfung',
		empty: 'Keine Charge wartet auf Prüfung.',
		items: (p: { reviewed: number; total: number }) => `${p.reviewed} von ${p.total} Punkten geprüft`,
		open: 'Prüfung öffnen'
	},
	page: {
		title: (p: { number: string }) => `Prüfung der Charge ${p.number}`,
		caution: 'Rimebook unterstützt die Prüfung; es ersetzt weder das Urteil der Qualitätssicherung noch das Freigabeverfahren des Standorts.',
		mark: 'Als geprüft markieren',
		release: 'Charge freigeben',
		reject: 'Charge zurückweisen',
		gatesClear: 'Alle Freigabebedingungen sind erfüllt.',
		gatesBlocked: 'Die Freigabe ist gesperrt:',
		disposed: (p: { decision: string }) => `Diese Charge ist ${p.decision}. Ihr Protokoll ist abgeschlossen und schreibgeschützt.`,
		decisions: { released: 'freigegeben', rejected: 'zurückgewiesen' }
	},
	states: { reviewed: 'Geprüft', 'needs-review': 'Zu prüfen', changed: 'Seit der Prüfung geändert', 'not-markable': 'Muss abgeschlossen werden' }
};
