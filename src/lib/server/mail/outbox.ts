import { randomUUID } from 'node:crypto';
import type { UnitOfWork } from '../work';
import { mailOutbox, type NotificationKind, type Role } from '../db/schema';
import { resolveRecipients, type Recipient } from './recipients';
import { composeMail } from './templates';

export interface Notification {
	kind: NotificationKind;
	batchId?: string | null;
	deviationId?: string | null;
	subject: string;
	text: string;
	toRoles?: Role[];
	toUserIds?: string[];
}

/** A notification whose text depends on each recipient's language (MAIL's own templates). */
export interface LocalizedNotification extends Omit<Notification, 'subject' | 'text'> {
	/** A path inside the app to link to instead of the batch/deviation page. */
	path?: string | null;
	/** People never to receive it, whatever their roles (the performer of the step to verify). */
	exceptUserIds?: string[];
	render(recipient: Recipient): { subject: string; text: string };
}

/**
 * Queues a notification inside the caller's unit of work: one outbox row per recipient, in the
 * caller's transaction, so it commits with the GMP action or not at all and is never lost to a
 * mail server that is down (the sender retries later). It never blocks nor rolls back the action
 * (issue 8, "Bad input"; design.md, "One write path": the record is the database, mail a notice): it runs in a
 * savepoint, and a failure here is logged and rolled back to that savepoint alone.
 */
export async function queueNotification(uow: UnitOfWork, n: Notification): Promise<void> {
	await queueRendered(uow, { ...n, render: () => ({ subject: n.subject, text: n.text }) });
}

/** Like queueNotification with text per recipient language; returns how many rows were queued. */
export async function queueRendered(uow: UnitOfWork, n: LocalizedNotification): Promise<number> {
	try {
		return await uow.tx.transaction(async (sp) => {
			const except = new Set(n.exceptUserIds ?? []);
			const recipients = (await resolveRecipients(sp, n.kind, n)).filter((r) => !except.has(r.userId));
			if (recipients.length === 0) return 0;
			const rows = recipients.map((r) => {
				const { subject, text } = n.render(r);
				const mail = composeMail({ kind: n.kind, batchId: n.batchId ?? null, deviationId: n.deviationId ?? null, path: n.path ?? null, subject, text, locale: r.locale });
				return {
					id: randomUUID(),
					kind: n.kind,
					batchId: n.batchId ?? null,
					deviationId: n.deviationId ?? null,
					recipientUserId: r.userId,
					toAddress: r.email,
					subject: mail.subject,
					body: mail.text
				};
			});
			await sp.insert(mailOutbox).values(rows);
			return rows.length;
		});
	} catch (err) {
		// Logged without the mail text (it may name a batch or a person); the GMP action goes on.
		console.error(`[mail] could not queue a ${n.kind} notification; the action itself is not affected:`, err instanceof Error ? err.message : err);
		return 0;
	}
}
