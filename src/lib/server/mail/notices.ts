import { isLocale, messagesFor } from '$lib/i18n';
import type { UnitOfWork } from '../work';
import { queueRendered } from './outbox';

/**
 * The notifications Rimebook writes itself, each in the recipient's language (i18n en|de/mail.ts).
 * Called inside the unit of work of the action they announce (queueRendered: never blocks it).
 */
const textsFor = (locale: string) => messagesFor(isLocale(locale) ? locale : 'en').mail.templates;

/** A critical step was performed and waits for a second person (21 CFR 211.188(b)(11)): supervisors, not the performer. */
export async function notifyVerificationRequested(uow: UnitOfWork, p: { batchId: string; batchNumber: string; step: string; performerId: string; performerName: string }): Promise<void> {
	await queueRendered(uow, {
		kind: 'verification-requested',
		batchId: p.batchId,
		toRoles: ['supervisor'],
		exceptUserIds: [p.performerId],
		render: (r) => {
			const t = textsFor(r.locale).verificationRequested;
			return { subject: t.subject({ batch: p.batchNumber, step: p.step }), text: t.text({ batch: p.batchNumber, step: p.step, by: p.performerName }) };
		}
	});
}

/** Every step is performed (and verified where critical): the batch awaits QA review (21 CFR 211.192). */
export async function notifyReadyForReview(uow: UnitOfWork, p: { batchId: string; batchNumber: string }): Promise<void> {
	await queueRendered(uow, {
		kind: 'batch-ready-for-review',
		batchId: p.batchId,
		toRoles: ['qa'],
		render: (r) => {
			const t = textsFor(r.locale).readyForReview;
			return { subject: t.subject({ batch: p.batchNumber }), text: t.text({ batch: p.batchNumber }) };
		}
	});
}

/** An account was locked after repeated failures (21 CFR 11.300(d): report attempted misuse to management): admins. */
export async function notifyAccountLocked(uow: UnitOfWork, p: { userId: string; username: string; failures: number; lockMinutes: number }): Promise<void> {
	await queueRendered(uow, {
		kind: 'account-locked',
		toRoles: ['admin'],
		path: `/people/${encodeURIComponent(p.userId)}`,
		render: (r) => {
			const t = textsFor(r.locale).accountLocked;
			return { subject: t.subject({ username: p.username }), text: t.text({ username: p.username, failures: p.failures, minutes: p.lockMinutes }) };
		}
	});
}
