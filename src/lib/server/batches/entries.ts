import { randomUUID } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { Database } from '../db/client';
import { reasonCode, stepEntry } from '../db/schema';
import { runUnitOfWork, type UnitOfWork } from '../work';
import { actorOf } from '../auth/account';
import type { SessionInfo, SessionUser } from '../auth/types';
import type { RelyingParty } from '../auth/passkey';
import { signRecord, verifySigner, type SignatureCredentials } from '../signatures/ceremony';
import { getConfig } from '../config';
import { raiseDeviation } from '../deviations/raise';
import { findStep, judgeStep, type StepJudgement } from '$lib/domain/batch/judge';
import type { StoredValue } from '$lib/domain/batch/values';
import { readInstant } from '$lib/domain/batch/values';
import { ExecutionError } from './errors';
import { currentValues, loadBatchRecords, progressOf, type BatchRecords } from './query';
import { readStepValues } from './validate';
import { getExecutionSettings } from './settings';
import { stepEntrySignatureContent } from './signed-content';
import { bumpBatchVersion } from './state';
import { isBatchOpen } from '$lib/domain/batch/status';
import { isUnit, labelUnit } from '$lib/domain/units';
import { notifyReadyForReview, notifyVerificationRequested } from '../mail/notices';

export interface StepEntryRequest {
	user: SessionUser;
	session: SessionInfo | null;
	address: string;
	relyingParty?: RelyingParty;
	batchId: string;
	stepKey: string;
	/** Field key → value as typed (see $lib/domain/batch/values). */
	values: Record<string, unknown>;
	comment?: string;
	/** Required for a correction (EU GMP 4.9): a code of the admin-managed list. */
	reasonCode?: string;
	/** When the work was done (ISO 8601 with zone); default now. */
	workedAt?: string;
	/** The batch version the person saw; required for a correction (no lost update). */
	expectedVersion?: number;
	credentials: SignatureCredentials;
}

export interface StepEntryResult {
	entryId: string;
	version: number;
	correction: boolean;
	outOfLimits: string[];
	late: boolean;
	deviations: string[];
	status: string;
}

function batchSizeOf(records: BatchRecords) {
	return { value: records.batch.batchSize, unit: records.batch.batchSizeUnit };
}

/** Everything checked before anything is written; run once before the ceremony and again under the lock. */
async function prepareEntry(db: Database | UnitOfWork['tx'], records: BatchRecords, req: StepEntryRequest, now: Date) {
	const { batch: b, template } = records;
	if (!isBatchOpen(b.status)) throw new ExecutionError('batch-closed', `Batch ${b.number} is ${b.status}: nothing more can be recorded.`);
	if (req.expectedVersion !== undefined && req.expectedVersion !== b.version) {
		throw new ExecutionError('stale-version', `Batch ${b.number} changed while you were working (version ${req.expectedVersion} → ${b.version}). Nothing was saved; look at the latest state and enter again.`);
	}
	const step = findStep(template, req.stepKey);
	if (!step) throw new ExecutionError('not-found', `Step ${req.stepKey} is not part of batch ${b.number}.`);
	// The master names who may perform a step (211.188(b)(11): who performed each significant step).
	if (!step.roles.some((r) => req.user.roles.includes(r))) throw new ExecutionError('wrong-role', `Step ${step.title} is performed by ${step.roles.join(' or ')}.`);
	const progress = progressOf(records);
	const sp = progress.steps.find((s) => s.key === step.key)!;
	const current = sp.current;
	const correction = current !== null;
	if (correction) {
		// EU GMP Ch. 4.9: a correction gives its reason; the person must have seen what they correct.
		if (req.expectedVersion === undefined) {
			throw new ExecutionError('already-performed', `Step ${sp.label} ${step.title} was performed by ${current.performedByName} at ${current.recordedAt}. To change it, make a correction of the latest version.`);
		}
		if (!req.reasonCode) throw new ExecutionError('reason-required', 'A correction needs a reason from the list.', [{ field: 'reasonCode', code: 'required', message: 'choose a reason' }]);
		const [reason] = await db.select().from(reasonCode).where(eq(reasonCode.code, req.reasonCode));
		if (!reason || !reason.active) throw new ExecutionError('unknown-reason', `'${req.reasonCode}' is not a reason code in use.`);
	} else {
		if (req.reasonCode) throw new ExecutionError('invalid-input', 'A reason code is for corrections; this step has no entry yet.');
		// 21 CFR 11.10(f): the permitted sequence of steps.
		if (sp.waitingFor.length > 0) {
			const names = sp.waitingFor.map((k) => `${progress.steps.find((s) => s.key === k)?.label} ${findStep(template, k)?.title ?? k}`);
			throw new ExecutionError('out-of-order', `Step ${sp.label} ${step.title} waits for ${names.join(', ')}.`);
		}
	}
	const config = getConfig();
	let workedAt = now;
	if (req.workedAt !== undefined) {
		const at = readInstant(req.workedAt);
		if (!at) throw new ExecutionError('invalid-input', `'${req.workedAt}' is not a date and time with a time zone.`, [{ field: 'workedAt', code: 'not-a-date', message: 'not a date and time' }]);
		if (at.getTime() > now.getTime() + 60_000) throw new ExecutionError('invalid-input', 'The work cannot be dated in the future.', [{ field: 'workedAt', code: 'in-the-future', message: 'in the future' }]);
		if (at.getTime() < b.issuedAt.getTime()) throw new ExecutionError('invalid-input', 'The work cannot be dated before the batch record was issued.', [{ field: 'workedAt', code: 'before-issue', message: 'before issue' }]);
		workedAt = at;
	} else if (current) workedAt = new Date(current.workedAt);
	const { values, problems } = await readStepValues(db, { batchId: b.id, step, raw: req.values, now, timeZone: config.RIMEBOOK_SITE_TIMEZONE });
	if (problems.length > 0) throw new ExecutionError('invalid-values', problems.map((p) => p.message).join(' · '), problems);
	const merged = new Map<string, StoredValue>([...currentValues(records, step.key), ...values]);
	const judgement = judgeStep(template, batchSizeOf(records), step, merged);
	const comment = req.comment?.trim() || null;
	if (judgement.outOfLimits.length > 0 && !comment) {
		const labels = judgement.outOfLimits.map((k) => step.fields.find((f) => f.key === k)?.label ?? k);
		throw new ExecutionError('comment-required', `Out of limits: ${labels.join(', ')}. Say what happened in a comment to save it.`, judgement.outOfLimits.map((k) => ({ field: k, code: 'out-of-limits', message: 'out of limits' })));
	}
	const settings = await getExecutionSettings(db);
	// EU GMP Ch. 4.8: entries are made at the time of the action; later ones are flagged.
	const late = !correction && now.getTime() - workedAt.getTime() > settings.lateEntryMinutes * 60_000;
	return { step, sp, current, correction, values, judgement, comment, workedAt, late, progress };
}

/** A unit as people write it (°C, µL), not as formulas spell it (degC, uL). */
function unitText(unit: string | undefined): string {
	return unit && isUnit(unit) ? labelUnit(unit) : (unit ?? '');
}

function describeOutOfLimits(step: { fields: { key: string; label: string; unit?: string }[] }, judgement: StepJudgement, values: Map<string, StoredValue>): string {
	return judgement.outOfLimits
		.map((k) => {
			const f = step.fields.find((x) => x.key === k);
			const j = judgement.fields[k];
			const v = values.get(k);
			const shown = v?.kind === 'number' ? `${v.text} ${unitText(v.unit)}` : j.reported !== undefined ? `${j.reported} ${unitText(j.unit)}` : v && 'value' in v ? JSON.stringify(v.value) : '';
			const b = j.bounds ? ` (limits ${j.bounds.min ?? '–'} … ${j.bounds.max ?? '–'} ${unitText(f?.unit)})` : '';
			return `${f?.label ?? k}: ${shown.trim()} is ${j.verdict}${b}`;
		})
		.join('; ');
}

/**
 * Records a step's values, signed "performed" (21 CFR 211.188(b); 11.50; 11.70), or a correction
 * that supersedes the entry in force (EU GMP 4.9). One unit of work: the entry, its signature,
 * any deviation it raises, the batch's new version and status, and their audit events.
 */
export async function recordStepEntry(db: Database, req: StepEntryRequest): Promise<StepEntryResult> {
	const before = await loadBatchRecords(db, req.batchId);
	if (!before) throw new ExecutionError('not-found', 'There is no such batch.');
	await prepareEntry(db, before, req, new Date());
	const proof = await verifySigner(db, { signer: req.user, session: req.session, meaning: 'performed', credentials: req.credentials, address: req.address, relyingParty: req.relyingParty });
	return runUnitOfWork(db, actorOf(req.user), async (uow) => {
		const records = await loadBatchRecords(uow.tx, req.batchId, { lock: true });
		if (!records) throw new ExecutionError('not-found', 'There is no such batch.');
		// Checked again under the lock: someone may have written between the first check and now.
		const now = new Date();
		const p = await prepareEntry(uow.tx, records, req, now);
		const b = records.batch;
		const entryId = randomUUID();
		const storedValues = Object.fromEntries(p.values);
		const facts = {
			id: entryId,
			stepKey: p.step.key,
			values: storedValues,
			calculations: p.judgement.calculations,
			outOfLimits: p.judgement.outOfLimits,
			comment: p.comment,
			reasonCode: req.reasonCode ?? null,
			supersedes: p.current?.id ?? null,
			workedAt: p.workedAt.toISOString()
		};
		// 11.70: the whole entry as stored, rebuilt the same way when the record is shown.
		const content = stepEntrySignatureContent(facts, b);
		const sig = await signRecord(uow, proof, { meaning: 'performed', entityType: 'step-entry', entityId: entryId, batchId: b.id, content });
		const row = {
			...facts,
			batchId: b.id,
			recordedAt: sig.at,
			late: p.late,
			performedBy: req.user.id,
			performedByName: req.user.name,
			signatureId: sig.id
		};
		await uow.tx.insert(stepEntry).values(row);
		const previous = p.current ? records.entries.find((e) => e.id === p.current!.id) : undefined;
		await uow.audit({
			action: p.correction ? 'batch.step.correct' : 'batch.step.perform',
			entityType: 'step-entry',
			entityId: entryId,
			batchId: b.id,
			before: previous ? { entryId: previous.id, values: previous.values, outOfLimits: previous.outOfLimits } : null,
			after: { ...row, signatureId: sig.id },
			reason: req.reasonCode ? `${req.reasonCode}${p.comment ? `: ${p.comment}` : ''}` : p.comment
		});
		const deviations: string[] = [];
		if (p.judgement.outOfLimits.length > 0) {
			const raised = await raiseDeviation(uow, {
				batchId: b.id,
				stepKey: p.step.key,
				entryId,
				source: 'auto',
				kind: 'out-of-limit',
				title: `Out of limits in step ${p.sp.label} ${p.step.title}`,
				description: `${describeOutOfLimits(p.step, p.judgement, p.values)}. Comment: ${p.comment}`
			});
			deviations.push(raised.number);
		}
		const after = { ...records, entries: [...records.entries, { ...row, recordedAt: sig.at } as BatchRecords['entries'][number]] };
		const status = progressOf(after).complete ? 'awaiting-review' : 'in-progress';
		const version = await bumpBatch(uow, records, status);
		if (p.step.critical) await notifyVerificationRequested(uow, { batchId: b.id, batchNumber: b.number, step: `${p.sp.label} ${p.step.title}`, performerId: req.user.id, performerName: req.user.name });
		return { entryId, version, correction: p.correction, outOfLimits: p.judgement.outOfLimits, late: p.late, deviations, status };
	});
}

/** New version (optimistic concurrency) and status of the batch, audited when the status changes. */
export async function bumpBatch(uow: UnitOfWork, records: BatchRecords, status: 'in-progress' | 'awaiting-review'): Promise<number> {
	const b = records.batch;
	const version = await bumpBatchVersion(uow.tx, b.id, status);
	if (status !== b.status) {
		await uow.audit({ action: 'batch.status', entityType: 'batch', entityId: b.id, batchId: b.id, before: { status: b.status }, after: { status } });
		if (status === 'awaiting-review') await notifyReadyForReview(uow, { batchId: b.id, batchNumber: b.number });
	}
	return version;
}
