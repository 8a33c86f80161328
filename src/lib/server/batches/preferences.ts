import { eq } from 'drizzle-orm';
import type { Database, Executor } from '../db/client';
import { user } from '../db/schema';
import { runUnitOfWork } from '../work';
import { actorOf } from '../auth/account';
import type { SessionUser } from '../auth/types';
import { preferencesSchema, readPreferences, type Preferences } from '$lib/domain/batch/preferences';
import { isLocale, type Locale } from '$lib/i18n';

export async function getPreferences(db: Executor, userId: string): Promise<Preferences> {
	const [row] = await db.select({ preferences: user.preferences }).from(user).where(eq(user.id, userId));
	return readPreferences(row?.preferences);
}

/** Saves a person's own preferences and language, audited like every change to an account (Annex 11, 12.4). */
export async function savePreferences(db: Database, who: SessionUser, input: { preferences: unknown; locale: string }): Promise<Preferences> {
	const prefs = preferencesSchema.parse(input.preferences);
	const locale: Locale = isLocale(input.locale) ? input.locale : 'en';
	return runUnitOfWork(db, actorOf(who), async (uow) => {
		const [before] = await uow.tx.select({ preferences: user.preferences, locale: user.locale }).from(user).where(eq(user.id, who.id));
		const stored = { ...((before?.preferences as Record<string, unknown>) ?? {}), ...prefs };
		await uow.tx.update(user).set({ preferences: stored, locale }).where(eq(user.id, who.id));
		await uow.audit({ action: 'user.preferences', entityType: 'user', entityId: who.id, before: before ?? null, after: { preferences: stored, locale } });
		return prefs;
	});
}
