import { desc, eq } from 'drizzle-orm';
import type { Database } from '../client';
import { batch, session } from '../schema';
import type { UnitOfWork } from '../../work';
import { createUserSession, rolesOf } from '../../auth/session';
import type { SessionInfo, SessionUser } from '../../auth/types';
import { recordStepEntry } from '../../batches/entries';
import { verifyStep } from '../../batches/verify';
import { saveReasonCode } from '../../batches/settings';
import { isExecutionError } from '../../batches/errors';
import type { SeedContext } from './index';

/** The reason codes a correction may give (EU GMP Ch. 4.9); admins can add and retire codes. */
export const demoReasonCodes = [
	{ code: 'transcription-error', label: 'Transcription error', sortOrder: 10 },
	{ code: 'wrong-unit', label: 'Wrong unit entered', sortOrder: 20 },
	{ code: 'instrument-re-read', label: 'Instrument re-read', sortOrder: 30 },
	{ code: 'wrong-item-scanned', label: 'Wrong lot or item scanned', sortOrder: 40 },
	{ code: 'late-entry', label: 'Late entry', sortOrder: 50 },
	{ code: 'other', label: 'Other (explain in the comment)', sortOrder: 90 }
];

/**
 * The demo batch in progress: the operator dispenses the sucrose (critical; the supervisor
 * verifies it) and the buffer salts, through the same services and signing ceremony as the
 * floor. A step whose demo lot or instrument is no longer usable on the day the demo is seeded
 * (expiry and calibration dates are fixed in scenario.ts) is left for the person trying the demo.
 */
export async function seedBatches(uow: UnitOfWork, context: SeedContext): Promise<void> {
	for (const r of demoReasonCodes) await saveReasonCode(uow, r);
	const db = uow.tx as unknown as Database;
	const [demo] = await db.select({ id: batch.id }).from(batch).orderBy(desc(batch.issuedAt)).limit(1);
	if (!demo) return;
	const operator = await signerOf(db, context, 'operator');
	const supervisor = await signerOf(db, context, 'supervisor');
	const steps: { key: string; values: Record<string, unknown> }[] = [
		{ key: 'weigh_sucrose', values: { sucrose_lot: 'SUC-40871', sucrose_balance: 'BAL-07', sucrose_weighed: '600.4' } },
		{
			key: 'weigh_buffer',
			values: {
				histidine_lot: 'HIS-1187',
				histidine_hcl_lot: 'HHC-0775',
				polysorbate_lot: 'PS80-0552',
				buffer_balance: 'BAL-12',
				histidine_weighed: '9.38',
				histidine_hcl_weighed: '12.61',
				polysorbate_weighed: '1.201'
			}
		}
	];
	for (const step of steps) {
		const ok = await tolerate(() =>
			recordStepEntry(db, {
				user: operator.user,
				session: operator.session,
				address: 'seed',
				batchId: demo.id,
				stepKey: step.key,
				values: step.values,
				credentials: { method: 'password', username: operator.user.username, password: context.password }
			})
		);
		if (!ok) return;
		operator.session = await refreshed(db, operator.session);
	}
	await tolerate(() =>
		verifyStep(db, {
			user: supervisor.user,
			session: supervisor.session,
			address: 'seed',
			batchId: demo.id,
			stepKey: 'weigh_sucrose',
			credentials: { method: 'password', username: supervisor.user.username, password: context.password }
		})
	);
}

async function tolerate(work: () => Promise<unknown>): Promise<boolean> {
	try {
		await work();
		return true;
	} catch (err) {
		if (!isExecutionError(err)) throw err;
		console.warn(`Demo batch: a step was left open (${err.message})`);
		return false;
	}
}

async function signerOf(db: Database, context: SeedContext, username: string): Promise<{ user: SessionUser; session: SessionInfo }> {
	const person = context.people.get(username);
	if (!person) throw new Error(`The demo has no ${username}.`);
	const user: SessionUser = { id: person.id, username, name: person.name, kind: 'person', roles: await rolesOf(db, person.id), mustChangePassword: false, locale: 'en' };
	const { session } = await createUserSession(db, person.id, 'password');
	return { user, session };
}

async function refreshed(db: Database, s: SessionInfo): Promise<SessionInfo> {
	const [row] = await db.select({ firstSignedAt: session.firstSignedAt }).from(session).where(eq(session.id, s.id));
	return { ...s, firstSignedAt: row?.firstSignedAt ?? null };
}
