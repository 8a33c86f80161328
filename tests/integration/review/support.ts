import { randomUUID } from 'node:crypto';
import { eq, sql } from 'drizzle-orm';
import type { Database } from '$lib/server/db/client';
import { auditCheckpoint, auditEvent, batch, batchDisposition, deviation, reviewMark, signature, user, userRole } from '$lib/server/db/schema';
import { runUnitOfWork } from '$lib/server/work';
import { systemActor } from '$lib/server/audit/ledger';
import { hashPassword } from '$lib/server/auth/password';
import { recordStepEntry } from '$lib/server/batches/entries';
import { verifyStep } from '$lib/server/batches/verify';
import { transitionDeviation, updateDeviation } from '$lib/server/deviations/workflow';
import { demoTemplateInput } from '$lib/domain/fixtures/demo-template';
import { templateSchema, type Template, type TemplateInput } from '$lib/schemas/template';
import type { Role } from '$lib/domain/permissions';
import { DEMO_PASSWORD, credentialsOf, insertBatch, personOf, refresh, type Person } from '../batches/support';

export { DEMO_PASSWORD, credentialsOf, insertBatch, personOf, refresh, type Person };

/**
 * A short record of the demo process (invented): dispense sucrose (critical), thaw the drug
 * substance, prepare the buffer. Executable through the real services without files or cycle logs.
 */
export const shortTemplate: Template = (() => {
	const t = structuredClone(demoTemplateInput) as TemplateInput;
	const keep = new Set(['weigh_sucrose', 'thaw_ds', 'prepare_buffer']);
	t.sections = t.sections.map((s) => ({ ...s, steps: s.steps.filter((st) => keep.has(st.key)) })).filter((s) => s.steps.length > 0);
	return templateSchema.parse(t);
})();

// Sucrose: 12 L × 50 mg/mL = 600.0 g ± 0.5 % (demo template). WFI 15–25 °C: 27.0 °C is out of limits.
export const values = {
	weigh_sucrose: { sucrose_lot: 'T-SUC-OK', sucrose_balance: 'T-BAL6-OK', sucrose_weighed: '600.4' },
	thaw_ds: { ds_lot: 'T-DS-OK', ds_cold_room: 'T-COLD-OK', ds_concentration: '50.2', ds_thawed_at: new Date(Date.now() - 600_000).toISOString() },
	prepare_buffer: { compounding_vessel: 'T-VSL-OK', wfi_temperature: '27.0', solids_dissolved: true }
};

/** A person with several roles (invented), e.g. QA who also executed: for the segregation-of-duties gates. */
export async function addPerson(db: Database, username: string, name: string, roles: Role[]): Promise<Person> {
	const passwordHash = await hashPassword(DEMO_PASSWORD);
	await runUnitOfWork(db, systemActor, async (uow) => {
		const id = randomUUID();
		await uow.tx.insert(user).values({ id, username, name, email: `${username}@example.invalid`, passwordHash, passwordChangedAt: new Date() });
		await uow.tx.insert(userRole).values(roles.map((role) => ({ userId: id, role })));
		await uow.audit({ action: 'test.user', entityType: 'user', entityId: id, after: { username, roles } });
	});
	return personOf(db, username);
}

export interface Crew {
	operator: Person;
	supervisor: Person;
}

/** Performs every step of a short batch (the WFI temperature out of limits: a deviation is raised) and verifies the critical one. */
export async function executeShortBatch(db: Database, crew: Crew, options: { verify?: boolean; wfi?: string } = {}): Promise<string> {
	const id = await insertBatch(db, { template: shortTemplate });
	for (const key of ['weigh_sucrose', 'thaw_ds', 'prepare_buffer'] as const) {
		const v = key === 'prepare_buffer' && options.wfi ? { ...values[key], wfi_temperature: options.wfi } : values[key];
		const outOfLimits = key === 'prepare_buffer' && !options.wfi;
		await recordStepEntry(db, { user: crew.operator.user, session: crew.operator.session, address: '10.2.0.1', batchId: id, stepKey: key, values: v, comment: outOfLimits ? 'Cooling water slow (invented)' : undefined, credentials: credentialsOf(crew.operator) });
		crew.operator = await refresh(db, crew.operator);
	}
	if (options.verify ?? true) {
		await verifyStep(db, { user: crew.supervisor.user, session: crew.supervisor.session, address: '10.2.0.2', batchId: id, stepKey: 'weigh_sucrose', credentials: credentialsOf(crew.supervisor) });
		crew.supervisor = await refresh(db, crew.supervisor);
	}
	return id;
}

/** Takes a batch's deviations through DEV's signed workflow to closed: the supervisor investigates and submits, QA approves. */
export async function closeDeviations(db: Database, batchId: string, investigator: Person, approver: Person): Promise<{ investigator: Person; approver: Person }> {
	const rows = await db.select().from(deviation).where(eq(deviation.batchId, batchId));
	for (const d of rows) {
		let version = d.version;
		if (d.status === 'open') {
			version = (await transitionDeviation(db, { id: d.id, action: 'start-investigation', expectedVersion: version, user: investigator.user, session: investigator.session, credentials: credentialsOf(investigator) })).version;
			investigator = await refresh(db, investigator);
		}
		if (d.status === 'open' || d.status === 'investigating') {
			const edited = await updateDeviation(db, investigator.user, {
				id: d.id,
				expectedVersion: version,
				fields: { classification: 'minor', investigation: 'Chiller setpoint drift (invented).', rootCause: 'Setpoint not restored after maintenance (invented).', impact: 'None: the buffer was cooled before use (invented).' }
			});
			version = (await transitionDeviation(db, { id: d.id, action: 'submit', expectedVersion: edited.version, user: investigator.user, session: investigator.session, credentials: credentialsOf(investigator) })).version;
			investigator = await refresh(db, investigator);
		}
		if (d.status !== 'closed' && d.status !== 'cancelled') {
			await transitionDeviation(db, { id: d.id, action: 'close', expectedVersion: version, closureComment: 'Investigation accepted (invented).', user: approver.user, session: approver.session, credentials: credentialsOf(approver) });
			approver = await refresh(db, approver);
		}
	}
	return { investigator, approver };
}

/** What a refused disposition must not have written: rows and events counted. */
export async function writeCounts(db: Database, batchId: string) {
	const n = async (q: Promise<{ n: number }[]>) => (await q)[0].n;
	return {
		dispositions: await n(db.select({ n: sql<number>`count(*)::int` }).from(batchDisposition).where(eq(batchDisposition.batchId, batchId))),
		signatures: await n(db.select({ n: sql<number>`count(*)::int` }).from(signature).where(eq(signature.batchId, batchId))),
		marks: await n(db.select({ n: sql<number>`count(*)::int` }).from(reviewMark).where(eq(reviewMark.batchId, batchId))),
		batchEvents: await n(db.select({ n: sql<number>`count(*)::int` }).from(auditEvent).where(eq(auditEvent.batchId, batchId))),
		checkpoints: await n(db.select({ n: sql<number>`count(*)::int` }).from(auditCheckpoint)),
		status: (await db.select({ s: batch.status, v: batch.version }).from(batch).where(eq(batch.id, batchId)))[0]
	};
}
