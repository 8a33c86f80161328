import { eq, like } from 'drizzle-orm';
import type { Database, Executor } from '../db/client';
import { batch, setting } from '../db/schema';
import { getConfig } from '../config';
import { runUnitOfWork } from '../work';
import { actorOf } from '../auth/account';
import type { SessionUser } from '../auth/types';
import { DEFAULT_BATCH_NUMBER_PATTERN, nextBatchNumber, parseNumberPattern, sequenceScope } from '$lib/domain/batch-number';
import { MasterError } from './errors';
import { assertPermission } from './access';

/** The site's batch numbering pattern is a setting (key below), changed only through the write path. */
export const NUMBERING_SETTING = 'batch-numbering';

export async function getNumberingPattern(db: Executor): Promise<string> {
	const [row] = await db.select({ value: setting.value }).from(setting).where(eq(setting.key, NUMBERING_SETTING));
	const pattern = (row?.value as { pattern?: unknown } | undefined)?.pattern;
	return typeof pattern === 'string' && parseNumberPattern(pattern).ok ? pattern : DEFAULT_BATCH_NUMBER_PATTERN;
}

/**
 * Sets the numbering pattern. QA owns it (it decides how batches are identified, 211.188; admins
 * sign no GMP record): needs batch.issue, a valid pattern and a reason; audited with before/after.
 */
export async function setNumberingPattern(db: Database, user: SessionUser, pattern: string, reason: string): Promise<void> {
	assertPermission(user, 'batch.issue');
	const parsed = parseNumberPattern(pattern.trim());
	if (!parsed.ok) throw new MasterError('invalid', parsed.message, [{ path: ['pattern'], code: 'numbering.pattern', message: parsed.message }]);
	if (!reason.trim()) throw new MasterError('reason-required', 'Give the reason for the change.');
	await runUnitOfWork(db, actorOf(user), async (uow) => {
		const [row] = await uow.tx.select().from(setting).where(eq(setting.key, NUMBERING_SETTING)).for('update');
		const value = { pattern: pattern.trim() };
		if (row) await uow.tx.update(setting).set({ value, updatedAt: new Date() }).where(eq(setting.key, NUMBERING_SETTING));
		else await uow.tx.insert(setting).values({ key: NUMBERING_SETTING, value });
		await uow.audit({ action: row ? 'setting.update' : 'setting.create', entityType: 'setting', entityId: NUMBERING_SETTING, before: row?.value ?? null, after: value, reason: reason.trim() });
	});
}

/** The year of issue in the site's time zone (a batch issued on 31 December late evening is that year's). */
export function siteYear(now = new Date()): number {
	return Number(new Intl.DateTimeFormat('en', { timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE, year: 'numeric' }).format(now));
}

/** The next free number for a product in the site's format (a proposal: issuing takes it under a lock). */
export async function proposeBatchNumber(db: Executor, productCode: string, now = new Date()): Promise<string> {
	const pattern = await getNumberingPattern(db);
	const parsed = parseNumberPattern(pattern);
	if (!parsed.ok) throw new Error(parsed.message);
	const ctx = { productCode, year: siteYear(now) };
	const scope = sequenceScope(parsed.parts, ctx);
	const prefix = scope.before.replace(/[\\%_]/g, (c) => `\\${c}`);
	const rows = await db.select({ number: batch.number }).from(batch).where(like(batch.number, `${prefix}%`));
	return nextBatchNumber(pattern, ctx, rows.map((r) => r.number));
}
