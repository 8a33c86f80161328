import { eq } from 'drizzle-orm';
import { z } from 'zod';
import type { Database, Executor } from '../db/client';
import { notificationKind, notificationPreference, type NotificationKind } from '../db/schema';
import { runUnitOfWork } from '../work';
import type { Actor } from '../audit/ledger';

export type NotificationChoices = Record<NotificationKind, boolean>;

/** Every kind on unless the person turned it off (a notice missed is worse than one too many). */
export async function getNotificationChoices(db: Executor, userId: string): Promise<NotificationChoices> {
	const rows = await db.select().from(notificationPreference).where(eq(notificationPreference.userId, userId));
	const choices = Object.fromEntries(notificationKind.map((k) => [k, true])) as NotificationChoices;
	for (const r of rows) choices[r.kind] = r.enabled;
	return choices;
}

export const notificationChoicesSchema = z.object(Object.fromEntries(notificationKind.map((k) => [k, z.boolean()])) as Record<NotificationKind, z.ZodBoolean>).strict();

/**
 * Saves a person's own choices, audited with before and after like every change to an account
 * (Annex 11, 12.4; 21 CFR 11.10(e)). Unchanged choices write nothing and append no event.
 */
export async function saveNotificationChoices(db: Database, who: Actor & { id: string }, input: unknown): Promise<{ changed: boolean; choices: NotificationChoices }> {
	const next = notificationChoicesSchema.parse(input) as NotificationChoices;
	const before = await getNotificationChoices(db, who.id);
	const changed = notificationKind.filter((k) => before[k] !== next[k]);
	if (changed.length === 0) return { changed: false, choices: before };
	await runUnitOfWork(db, who, async (uow) => {
		// Read again inside the transaction, so the audited "before" is what this change replaced.
		const current = await getNotificationChoices(uow.tx, who.id);
		for (const kind of notificationKind.filter((k) => current[k] !== next[k])) {
			await uow.tx
				.insert(notificationPreference)
				.values({ userId: who.id, kind, enabled: next[kind] })
				.onConflictDoUpdate({ target: [notificationPreference.userId, notificationPreference.kind], set: { enabled: next[kind], updatedAt: new Date().toISOString() } });
		}
		await uow.audit({ action: 'user.notification-preferences', entityType: 'user', entityId: who.id, before: current, after: next });
	});
	return { changed: true, choices: next };
}
