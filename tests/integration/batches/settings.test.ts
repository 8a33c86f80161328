import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { and, eq } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { auditEvent } from '$lib/server/db/schema';
import { changeExecutionSetting, getExecutionSettings, listReasonCodes } from '$lib/server/batches/settings';
import { ExecutionError } from '$lib/server/batches/errors';
import { databaseKinds, type TestDatabase } from '../support/databases';
import { seededDatabase, sessionUser } from './support';

/**
 * The settings of batch execution that administrators manage (design.md: admins manage the
 * reason codes; EU GMP Ch. 4.8 late-entry limit): only `settings.manage`, always with a reason,
 * each change in the audit trail with before, after and why (21 CFR 11.10(e); Annex 11 12.4).
 */
describe.each(databaseKinds)('execution settings on %s', (kind) => {
	let t: TestDatabase;
	let db: Database;

	beforeAll(async () => {
		t = await seededDatabase(kind);
		db = t.handle.db;
	});
	afterAll(async () => t?.dispose());

	test('an administrator adds and retires a reason code and changes the late-entry limit; each change is audited with its reason', async () => {
		const admin = await sessionUser(db, 'admin');
		await changeExecutionSetting(db, admin, { kind: 'reason-code', value: { code: 'label-misread', label: 'Label misread', sortOrder: 90 } }, 'Added after deviation review (test)');
		expect((await listReasonCodes(db)).map((r) => r.code)).toContain('label-misread');
		await changeExecutionSetting(db, admin, { kind: 'reason-code', value: { code: 'label-misread', label: 'Label misread', active: false, sortOrder: 90 } }, 'Merged into transcription error (test)');
		expect((await listReasonCodes(db)).map((r) => r.code)).not.toContain('label-misread');
		expect((await listReasonCodes(db, { includeRetired: true })).find((r) => r.code === 'label-misread')).toEqual({ code: 'label-misread', label: 'Label misread', active: false, sortOrder: 90 });
		const codeEvents = await db.select().from(auditEvent).where(and(eq(auditEvent.entityType, 'reason-code'), eq(auditEvent.entityId, 'label-misread')));
		expect(codeEvents.map((e) => [e.action, e.reason])).toEqual([
			['reason-code.create', 'Added after deviation review (test)'],
			['reason-code.update', 'Merged into transcription error (test)']
		]);

		const before = await getExecutionSettings(db);
		await changeExecutionSetting(db, admin, { kind: 'settings', value: { lateEntryMinutes: 45 } }, 'SOP revision 4 (test)');
		expect(await getExecutionSettings(db)).toEqual({ lateEntryMinutes: 45 });
		const [ev] = await db.select().from(auditEvent).where(and(eq(auditEvent.action, 'setting.update'), eq(auditEvent.entityId, 'batch-execution')));
		expect({ before: ev.before, after: ev.after, reason: ev.reason }).toEqual({ before, after: { lateEntryMinutes: 45 }, reason: 'SOP revision 4 (test)' });
	});

	test('no reason, a bad value or a person without settings.manage: refused and nothing changes', async () => {
		const admin = await sessionUser(db, 'admin');
		const supervisor = await sessionUser(db, 'supervisor');
		const codeOf = (p: Promise<unknown>) => p.then(() => 'ok', (e) => (e instanceof ExecutionError ? e.code : Promise.reject(e)));
		const before = await getExecutionSettings(db);
		expect(await codeOf(changeExecutionSetting(db, admin, { kind: 'settings', value: { lateEntryMinutes: 20 } }, '   '))).toBe('reason-required');
		expect(await codeOf(changeExecutionSetting(db, admin, { kind: 'settings', value: { lateEntryMinutes: 0 } }, 'too strict'))).toBe('invalid-input');
		expect(await codeOf(changeExecutionSetting(db, admin, { kind: 'settings', value: { lateEntryMinutes: 2.5 } }, 'fractional'))).toBe('invalid-input');
		expect(await codeOf(changeExecutionSetting(db, admin, { kind: 'reason-code', value: { code: 'Bad Code', label: 'x' } }, 'bad code'))).toBe('invalid-input');
		expect(await codeOf(changeExecutionSetting(db, supervisor, { kind: 'settings', value: { lateEntryMinutes: 20 } }, 'not mine to change'))).toBe('wrong-role');
		expect(await getExecutionSettings(db)).toEqual(before);
		expect((await listReasonCodes(db, { includeRetired: true })).map((r) => r.code)).not.toContain('Bad Code');
	});
});
