import { eq } from 'drizzle-orm';
import type { Database } from '../client';
import { deviation, session } from '../schema';
import type { UnitOfWork } from '../../work';
import { createUserSession, rolesOf } from '../../auth/session';
import type { SessionInfo, SessionUser } from '../../auth/types';
import { approveMaster, createMaster, makeEffective, submitMaster } from '../../masters/lifecycle';
import { issueBatch } from '../../masters/issue';
import { recordStepEntry } from '../../batches/entries';
import { verifyStep } from '../../batches/verify';
import { isExecutionError } from '../../batches/errors';
import { transitionDeviation, updateDeviation } from '../../deviations/workflow';
import { demoTemplateInput } from '$lib/domain/fixtures/demo-template';
import type { TemplateInput } from '$lib/schemas/template';
import type { SeedContext } from './index';

/** The steps of the bulk-solution record: the compounding part of the demo process (invented). */
const BULK_STEPS = ['weigh_sucrose', 'weigh_buffer', 'thaw_ds', 'prepare_buffer', 'add_ds', 'adjust_bulk'];

/**
 * An invented intermediate: the bulk solution of the demo product, made and released as its own
 * batch before filling (a common split of a lyophilised product's records). Same steps, limits
 * and formulas as the compounding part of the demo master.
 */
export function bulkTemplateInput(): TemplateInput {
	const t = structuredClone(demoTemplateInput) as TemplateInput;
	t.header = { ...t.header, productName: 'Tavoriel 20 mg bulk solution for freeze-drying', productCode: 'TAV-020-BS', dosageForm: 'bulk solution for freeze-drying (intermediate)', theoreticalYield: { value: 12.3, unit: 'kg', minPercent: 98, maxPercent: 101 }, version: 1, status: 'draft' };
	t.sections = t.sections.map((s) => ({ ...s, steps: s.steps.filter((st) => BULK_STEPS.includes(st.key)) })).filter((s) => s.steps.length > 0);
	return t;
}

interface Signer {
	user: SessionUser;
	session: SessionInfo;
}

/**
 * The second demo batch, for review by exception and release: QA issues a bulk-solution batch,
 * the operator performs every step (the water for injection is 0.8 °C too warm: out of limits,
 * which raises a deviation), the supervisor verifies the critical steps, so the batch awaits
 * review; the supervisor then investigates the deviation and submits it for QA approval. What is
 * left for the person trying the demo is QA's part: review the items, approve the deviation's
 * closure and release the batch. Every signature goes through the real ceremony.
 */
export async function seedReview(uow: UnitOfWork, context: SeedContext): Promise<void> {
	const db = uow.tx as unknown as Database;
	const author = await signerOf(db, context, 'author');
	const qa = await signerOf(db, context, 'qa');
	const operator = await signerOf(db, context, 'operator');
	const supervisor = await signerOf(db, context, 'supervisor');
	const credentials = (who: Signer) => ({ method: 'password' as const, username: who.user.username, password: context.password });
	const address = 'seed';

	const { id: masterId } = await createMaster(db, author.user, bulkTemplateInput());
	await submitMaster(db, { ...author, id: masterId, credentials: credentials(author), address });
	await approveMaster(db, { ...qa, id: masterId, credentials: credentials(qa), address });
	await makeEffective(db, qa.user, masterId, 'Demo scenario seeded');
	const { batchId } = await issueBatch(db, { ...qa, masterRecordId: masterId, batchSize: 12, credentials: credentials(qa), address });

	// 12 L: sucrose 600.0 g ± 0.5 %, histidine 9.36 g, histidine HCl 12.60 g, polysorbate 1.200 g,
	// drug substance 12 L × 20 mg/mL / 50.0 mg/mL = 4800 mL, target bulk 12 L × 1.0250 g/mL = 12.300 kg.
	const steps: { key: string; values: Record<string, unknown>; comment?: string; verify?: boolean }[] = [
		{ key: 'weigh_sucrose', values: { sucrose_lot: 'SUC-40871', sucrose_balance: 'BAL-07', sucrose_weighed: '599.8' }, verify: true },
		{ key: 'weigh_buffer', values: { histidine_lot: 'HIS-1187', histidine_hcl_lot: 'HHC-0775', polysorbate_lot: 'PS80-0552', buffer_balance: 'BAL-12', histidine_weighed: '9.35', histidine_hcl_weighed: '12.62', polysorbate_weighed: '1.199' }, verify: true },
		{ key: 'thaw_ds', values: { ds_lot: 'TVA-DS-2611', ds_cold_room: 'CLD-02', ds_concentration: '50.0', ds_thawed_at: new Date(Date.now() - 90 * 60_000).toISOString() } },
		{ key: 'prepare_buffer', values: { compounding_vessel: 'VSL-03', wfi_temperature: '25.8', solids_dissolved: true }, comment: 'WFI loop return was warm after sanitisation; solution cooled before the drug substance was added.' },
		{ key: 'add_ds', values: { ds_volume_added: '4800', mixing_time: '20' }, verify: true },
		{ key: 'adjust_bulk', values: { ph_meter: 'PHM-05', bulk_ph_value: '6.02', density_meter: 'DNS-01', bulk_density: '1.0250', bulk_scale: 'SCL-03', bulk_mass: '12.305', bulk_appearance: ['clear'] }, verify: true }
	];
	try {
		for (const step of steps) {
			await recordStepEntry(db, { user: operator.user, session: operator.session, address, batchId, stepKey: step.key, values: step.values, comment: step.comment, credentials: credentials(operator) });
			if (step.verify) await verifyStep(db, { user: supervisor.user, session: supervisor.session, address, batchId, stepKey: step.key, credentials: credentials(supervisor) });
		}
	} catch (err) {
		// A demo lot or instrument no longer usable on the day of seeding: leave the rest for the person trying the demo.
		if (!isExecutionError(err)) throw err;
		console.warn(`Demo bulk batch: a step was left open (${err.message})`);
		return;
	}
	const [raised] = await db.select().from(deviation).where(eq(deviation.batchId, batchId));
	if (!raised) return;
	const started = await transitionDeviation(db, { id: raised.id, action: 'start-investigation', expectedVersion: raised.version, user: supervisor.user, session: await refreshed(db, supervisor), credentials: credentials(supervisor), address });
	const edited = await updateDeviation(db, supervisor.user, {
		id: raised.id,
		expectedVersion: started.version,
		fields: {
			classification: 'minor',
			immediateAction: 'Buffer cooled to 21 °C in the jacketed vessel before the drug substance was added.',
			investigation: 'The WFI loop had been hot-water sanitised that morning; the point-of-use cooler was bypassed for 20 minutes after the cycle.',
			rootCause: 'The loop release checklist does not ask for the point-of-use temperature before the first draw.',
			impact: 'None on the product: the drug substance met a buffer at 21 °C; bulk pH, density and mass are within limits.',
			capaRefs: ['CAPA-2026-031']
		}
	});
	await transitionDeviation(db, { id: raised.id, action: 'submit', expectedVersion: edited.version, user: supervisor.user, session: await refreshed(db, supervisor), credentials: credentials(supervisor), address });
}

async function signerOf(db: Database, context: SeedContext, username: string): Promise<Signer> {
	const person = context.people.get(username);
	if (!person) throw new Error(`The demo has no ${username}.`);
	const user: SessionUser = { id: person.id, username, name: person.name, kind: 'person', roles: await rolesOf(db, person.id), mustChangePassword: false, locale: 'en' };
	const { session } = await createUserSession(db, person.id, 'password');
	return { user, session };
}

async function refreshed(db: Database, s: Signer): Promise<SessionInfo> {
	const [row] = await db.select({ firstSignedAt: session.firstSignedAt }).from(session).where(eq(session.id, s.session.id));
	return { ...s.session, firstSignedAt: row?.firstSignedAt ?? null };
}
