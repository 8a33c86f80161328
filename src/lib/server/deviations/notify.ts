import { eq } from 'drizzle-orm';
import type { UnitOfWork } from '../work';
import { batch } from '../db/schema';
import { queueNotification } from '../mail';
import { messagesFor } from '$lib/i18n';

export type DeviationNotice = 'deviation-raised' | 'deviation-awaiting-approval';

/**
 * Tells QA about a deviation by e-mail (issue 8): on raise (automatic or manual) and when its
 * investigation is submitted for approval. The outbox row is written in the caller's unit of work,
 * so it commits with the action or not at all; a mail server that is down delays the mail and
 * never blocks the GMP action (mail/outbox.ts runs it in a savepoint).
 */
export async function notifyDeviation(uow: UnitOfWork, kind: DeviationNotice, d: { id: string; number: string; title: string; batchId: string | null }): Promise<void> {
	const t = messagesFor('en').deviations.mail;
	const [b] = d.batchId ? await uow.tx.select({ number: batch.number }).from(batch).where(eq(batch.id, d.batchId)) : [];
	const words = { number: d.number, title: d.title, batch: b?.number ?? t.noBatch, by: uow.actor.name };
	await queueNotification(uow, {
		kind,
		batchId: d.batchId,
		deviationId: d.id,
		subject: kind === 'deviation-raised' ? t.raisedSubject(words) : t.awaitingSubject(words),
		text: kind === 'deviation-raised' ? t.raisedText(words) : t.awaitingText(words),
		toRoles: ['qa']
	});
}
