/** E-mail notifications: the mails Rimebook writes itself, the preferences page and the development mailbox. */
export const mail = {
	kinds: {
		'verification-requested': 'Verification requested',
		'deviation-raised': 'Deviation raised',
		'deviation-awaiting-approval': 'Deviation awaiting QA approval',
		'batch-ready-for-review': 'Batch ready for review',
		'batch-disposed': 'Batch released or rejected',
		'account-locked': 'Account locked'
	} as Record<string, string>,
	kindHints: {
		'verification-requested': 'A critical step was performed and waits for a second person’s verification (supervisors).',
		'deviation-raised': 'A deviation was raised on a batch (QA).',
		'deviation-awaiting-approval': 'A deviation’s investigation is complete and waits for QA approval (QA).',
		'batch-ready-for-review': 'Every step of a batch is performed; the batch waits for QA review (QA).',
		'batch-disposed': 'QA released or rejected a batch.',
		'account-locked': 'An account was locked after repeated failed sign-ins (administrators).'
	} as Record<string, string>,
	/** The mail footer: why the person receives it and where to change that. No secrets, no data beyond the subject. */
	footer: (p: { site: string }) => `This message was sent by ${p.site}. The electronic record in ${p.site} is the official record; this e-mail is only a notice.\nChoose which notices you receive under Preferences › Notifications.`,
	openRecord: 'Open the record:',
	templates: {
		verificationRequested: {
			subject: (p: { batch: string; step: string }) => `Verification requested: ${p.batch}, step ${p.step}`,
			text: (p: { batch: string; step: string; by: string }) => `${p.by} performed step ${p.step} of batch ${p.batch}. It is a critical step and waits for verification by a second person.`
		},
		readyForReview: {
			subject: (p: { batch: string }) => `Batch ready for review: ${p.batch}`,
			text: (p: { batch: string }) => `Every step of batch ${p.batch} is performed. The batch waits for QA review.`
		},
		accountLocked: {
			subject: (p: { username: string }) => `Account locked: ${p.username}`,
			text: (p: { username: string; failures: number; minutes: number }) =>
				`The account ${p.username} was locked after ${p.failures} failed attempts. It unlocks by itself after ${p.minutes} minutes, or an administrator can unlock it under People. If the attempts were not the account holder’s, look into them in the audit trail.`
		}
	},
	preferences: {
		title: 'Notifications',
		intro: 'Choose which e-mail notices you receive. They are notices only: the record in Rimebook stays the official one.',
		noEmail: 'Your account has no e-mail address, so you receive no notices. An administrator can add one under People.',
		sendsTo: (p: { email: string }) => `Notices go to ${p.email}.`,
		saved: 'Notification choices saved.',
		invalid: 'Choose among the notices offered.',
		back: 'Display preferences'
	},
	dev: {
		title: 'Development mailbox',
		intro: 'Development only: the mail the local SMTP server received, and the outbox. This page does not exist in production.',
		received: 'Received by the local SMTP server',
		none: 'Nothing received yet.',
		notRunning: 'The local SMTP server is not running (an SMTP server is configured, or mail is off).',
		outbox: 'Outbox',
		outboxEmpty: 'The outbox is empty.',
		columns: { at: 'When', to: 'To', subject: 'Subject', kind: 'Kind', status: 'State', attempts: 'Attempts', error: 'Last error' },
		statuses: { pending: 'Waiting', sent: 'Sent', failed: 'Given up' } as Record<string, string>,
		show: 'Show text'
	}
};
