import type { mail as en } from '../en/mail';
import type { DeepPartial } from '../types';

/** German: the notices Rimebook writes itself and the preferences page; the development mailbox stays English. */
export const mail: DeepPartial<typeof en> = {
	kinds: {
		'verification-requested': 'Verifizierung angefordert',
		'deviation-raised': 'Abweichung eröffnet',
		'deviation-awaiting-approval': 'Abweichung wartet auf QS-Freigabe',
		'batch-ready-for-review': 'Charge bereit zur Prüfung',
		'batch-disposed': 'Charge freigegeben oder zurückgewiesen',
		'account-locked': 'Konto gesperrt'
	},
	kindHints: {
		'verification-requested': 'Ein kritischer Schritt wurde ausgeführt und wartet auf die Verifizierung durch eine zweite Person (Schichtleitung).',
		'deviation-raised': 'Zu einer Charge wurde eine Abweichung eröffnet (QS).',
		'deviation-awaiting-approval': 'Die Untersuchung einer Abweichung ist abgeschlossen und wartet auf die Freigabe durch die QS (QS).',
		'batch-ready-for-review': 'Alle Schritte einer Charge sind ausgeführt; die Charge wartet auf die Prüfung durch die QS (QS).',
		'batch-disposed': 'Die QS hat eine Charge freigegeben oder zurückgewiesen.',
		'account-locked': 'Ein Konto wurde nach wiederholten fehlgeschlagenen Anmeldungen gesperrt (Administration).'
	},
	footer: (p: { site: string }) => `Diese Nachricht wurde von ${p.site} gesendet. Maßgeblich ist der elektronische Datensatz in ${p.site}; diese E-Mail ist nur ein Hinweis.\nWelche Hinweise Sie erhalten, wählen Sie unter Einstellungen › Benachrichtigungen.`,
	openRecord: 'Datensatz öffnen:',
	templates: {
		verificationRequested: {
			subject: (p: { batch: string; step: string }) => `Verifizierung angefordert: ${p.batch}, Schritt ${p.step}`,
			text: (p: { batch: string; step: string; by: string }) => `${p.by} hat Schritt ${p.step} der Charge ${p.batch} ausgeführt. Es ist ein kritischer Schritt; er wartet auf die Verifizierung durch eine zweite Person.`
		},
		readyForReview: {
			subject: (p: { batch: string }) => `Charge bereit zur Prüfung: ${p.batch}`,
			text: (p: { batch: string }) => `Alle Schritte der Charge ${p.batch} sind ausgeführt. Die Charge wartet auf die Prüfung durch die QS.`
		},
		accountLocked: {
			subject: (p: { username: string }) => `Konto gesperrt: ${p.username}`,
			text: (p: { username: string; failures: number; minutes: number }) =>
				`Das Konto ${p.username} wurde nach ${p.failures} Fehlversuchen gesperrt. Es wird nach ${p.minutes} Minuten von selbst entsperrt, oder eine Administratorin bzw. ein Administrator entsperrt es unter Personen. Stammen die Versuche nicht vom Kontoinhaber, prüfen Sie sie im Audit-Trail.`
		}
	},
	preferences: {
		title: 'Benachrichtigungen',
		intro: 'Wählen Sie, welche E-Mail-Hinweise Sie erhalten. Es sind nur Hinweise: maßgeblich bleibt der Datensatz in Rimebook.',
		noEmail: 'Ihr Konto hat keine E-Mail-Adresse, daher erhalten Sie keine Hinweise. Eine Administratorin bzw. ein Administrator kann sie unter Personen eintragen.',
		sendsTo: (p: { email: string }) => `Hinweise gehen an ${p.email}.`,
		saved: 'Auswahl gespeichert.',
		invalid: 'Wählen Sie unter den angebotenen Hinweisen.',
		back: 'Anzeige-Einstellungen'
	}
};
