import { asc, eq } from 'drizzle-orm';
import { z } from 'zod';
import type { Executor } from '../db/client';
import { reasonCode, setting } from '../db/schema';
import type { Database } from '../db/client';
import { runUnitOfWork, type UnitOfWork } from '../work';
import { actorOf } from '../auth/account';
import type { SessionUser } from '../auth/types';
import { hasPermission } from '$lib/domain/permissions';
import { ExecutionError } from './errors';

/** Site settings of batch execution, in the `setting` table under this key (changed by admins, audited). */
export const EXECUTION_SETTING_KEY = 'batch-execution';

const executionSettingsSchema = z.object({
	/**
	 * An entry recorded more than this many minutes after the work it records is flagged late
	 * (EU GMP Ch. 4.8: record at the time of the action). 30 min is our default (common practice
	 * is a site SOP value between 15 and 60 minutes).
	 */
	lateEntryMinutes: z.number().int().positive().max(7 * 24 * 60).default(30)
});
export type ExecutionSettings = z.infer<typeof executionSettingsSchema>;

export async function getExecutionSettings(db: Executor): Promise<ExecutionSettings> {
	const [row] = await db.select({ value: setting.value }).from(setting).where(eq(setting.key, EXECUTION_SETTING_KEY));
	const parsed = executionSettingsSchema.safeParse(row?.value ?? {});
	return parsed.success ? parsed.data : executionSettingsSchema.parse({});
}

export async function saveExecutionSettings(uow: UnitOfWork, next: ExecutionSettings, reason: string | null = null): Promise<void> {
	const value = executionSettingsSchema.parse(next);
	const before = await getExecutionSettings(uow.tx);
	await uow.tx.insert(setting).values({ key: EXECUTION_SETTING_KEY, value }).onConflictDoUpdate({ target: setting.key, set: { value } });
	await uow.audit({ action: 'setting.update', entityType: 'setting', entityId: EXECUTION_SETTING_KEY, before, after: value, reason });
}

export interface ReasonOption {
	code: string;
	label: string;
	active: boolean;
	sortOrder: number;
}

export async function listReasonCodes(db: Executor, options: { includeRetired?: boolean } = {}): Promise<ReasonOption[]> {
	const rows = await db.select({ code: reasonCode.code, label: reasonCode.label, active: reasonCode.active, sortOrder: reasonCode.sortOrder }).from(reasonCode).orderBy(asc(reasonCode.sortOrder), asc(reasonCode.code));
	return options.includeRetired ? rows : rows.filter((r) => r.active);
}

export const reasonCodeSchema = z.object({
	code: z.string().regex(/^[a-z][a-z0-9-]{1,39}$/, 'a code is 2–40 lower-case letters, digits or -'),
	label: z.string().trim().min(1).max(120),
	active: z.boolean().default(true),
	sortOrder: z.number().int().default(0)
});

/** Adds or changes a reason code (admins; design.md: admins manage reason codes). Audited with before and after. */
export async function saveReasonCode(uow: UnitOfWork, input: z.input<typeof reasonCodeSchema>, reason: string | null = null): Promise<void> {
	const value = reasonCodeSchema.parse(input);
	const [before] = await uow.tx.select().from(reasonCode).where(eq(reasonCode.code, value.code));
	await uow.tx.insert(reasonCode).values(value).onConflictDoUpdate({ target: reasonCode.code, set: { label: value.label, active: value.active, sortOrder: value.sortOrder } });
	await uow.audit({ action: before ? 'reason-code.update' : 'reason-code.create', entityType: 'reason-code', entityId: value.code, before: before ?? null, after: value, reason });
}

/**
 * An administrator's change from the settings page: the permission checked again here, a reason
 * required, and the change written with its reason in one audited unit of work (21 CFR
 * 11.10(e), Annex 11 12.4: who changed what, when and why).
 */
export async function changeExecutionSetting(
	db: Database,
	who: SessionUser,
	change: { kind: 'reason-code'; value: z.input<typeof reasonCodeSchema> } | { kind: 'settings'; value: ExecutionSettings },
	reason: string
): Promise<void> {
	if (!hasPermission(who.roles, 'settings.manage')) throw new ExecutionError('wrong-role', 'Only an administrator changes the execution settings.');
	const why = reason.trim();
	if (why === '') throw new ExecutionError('reason-required', 'Say why you make this change.', [{ field: 'reason', code: 'required', message: 'a reason is required' }]);
	if (why.length > 500) throw new ExecutionError('invalid-input', 'The reason is at most 500 characters.', [{ field: 'reason', code: 'too-long', message: 'at most 500 characters' }]);
	const parsed = change.kind === 'settings' ? executionSettingsSchema.safeParse(change.value) : reasonCodeSchema.safeParse(change.value);
	if (!parsed.success) {
		const issues = parsed.error.issues.map((i) => ({ field: String(i.path[0] ?? 'value'), code: 'invalid', message: i.message }));
		throw new ExecutionError('invalid-input', issues.map((i) => `${i.field}: ${i.message}`).join(' · '), issues);
	}
	await runUnitOfWork(db, actorOf(who), async (uow) => {
		if (change.kind === 'settings') await saveExecutionSettings(uow, change.value, why);
		else await saveReasonCode(uow, change.value, why);
	});
}
