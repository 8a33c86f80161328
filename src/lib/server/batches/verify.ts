import { randomUUID } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { Database } from '../db/client';
import { signature, stepVerification } from '../db/schema';
import { runUnitOfWork } from '../work';
import { actorOf } from '../auth/account';
import type { SessionInfo, SessionUser } from '../auth/types';
import type { RelyingParty } from '../auth/passkey';
import { signRecord, verifySigner, type SignatureCredentials } from '../signatures/ceremony';
import { hasPermission } from '$lib/domain/permissions';
import { findStep } from '$lib/domain/batch/judge';
import { ExecutionError } from './errors';
import { loadBatchRecords, progressOf, type BatchRecords } from './query';
import { bumpBatch } from './entries';
import { isBoundTo, stepEntrySignatureContent, stepVerificationSignatureContent } from './signed-content';
import { isBatchOpen } from '$lib/domain/batch/status';

export interface VerifyStepRequest {
	user: SessionUser;
	session: SessionInfo | null;
	address: string;
	relyingParty?: RelyingParty;
	batchId: string;
	stepKey: string;
	expectedVersion?: number;
	credentials: SignatureCredentials;
}

function check(records: BatchRecords, req: VerifyStepRequest) {
	const { batch: b, template } = records;
	if (!isBatchOpen(b.status)) throw new ExecutionError('batch-closed', `Batch ${b.number} is ${b.status}: nothing more can be recorded.`);
	if (req.expectedVersion !== undefined && req.expectedVersion !== b.version) {
		throw new ExecutionError('stale-version', `Batch ${b.number} changed while you were looking at it (version ${req.expectedVersion} → ${b.version}). Nothing was signed; look at the latest state first.`);
	}
	const step = findStep(template, req.stepKey);
	if (!step) throw new ExecutionError('not-found', `Step ${req.stepKey} is not part of batch ${b.number}.`);
	if (!step.critical) throw new ExecutionError('not-critical', `Step ${step.title} is not critical: it needs no verification.`);
	// 21 CFR 211.188(b)(11), Annex 11 clause 6: a second person checks critical steps; here a supervisor.
	if (!hasPermission(req.user.roles, 'batch.verify')) throw new ExecutionError('wrong-role', 'Verifying a critical step needs the supervisor role.');
	const sp = progressOf(records).steps.find((s) => s.key === step.key)!;
	if (!sp.current) throw new ExecutionError('not-performed', `Step ${sp.label} ${step.title} has not been performed yet.`);
	if (sp.verification) throw new ExecutionError('already-verified', `Step ${sp.label} ${step.title} is already verified.`);
	// Nobody verifies their own entry: not the entry in force, nor one it corrects.
	if (sp.history.some((e) => e.performedBy === req.user.id)) throw new ExecutionError('own-entry', 'You recorded this step yourself: another person must verify it.');
	return { step, sp, current: sp.current };
}

/** Countersigns a critical step's entry in force, signed "verified" (one unit of work with its audit events). */
export async function verifyStep(db: Database, req: VerifyStepRequest): Promise<{ version: number; status: string }> {
	const before = await loadBatchRecords(db, req.batchId);
	if (!before) throw new ExecutionError('not-found', 'There is no such batch.');
	check(before, req);
	const proof = await verifySigner(db, { signer: req.user, session: req.session, meaning: 'verified', credentials: req.credentials, address: req.address, relyingParty: req.relyingParty });
	return runUnitOfWork(db, actorOf(req.user), async (uow) => {
		const records = await loadBatchRecords(uow.tx, req.batchId, { lock: true });
		if (!records) throw new ExecutionError('not-found', 'There is no such batch.');
		// Without an explicit version the entry seen before the ceremony must still be the one in force.
		const { sp, current } = check(records, req);
		const seen = progressOf(before).steps.find((s) => s.key === sp.key)?.current?.id;
		if (seen !== current.id) throw new ExecutionError('stale-version', 'The entry changed while you were signing. Nothing was signed; look at the latest state first.');
		const id = randomUUID();
		// 11.70: the countersignature binds the whole entry and the "performed" signature on it.
		// An entry whose own signature no longer matches it is not verified (11.10(a)).
		const [performed] = await uow.tx.select().from(signature).where(eq(signature.id, current.signatureId));
		if (!isBoundTo(performed, { entityType: 'step-entry', entityId: current.id, meaning: 'performed' }, stepEntrySignatureContent(current, records.batch))) {
			throw new Error(`The performed signature of entry ${current.id} does not match the entry; it was not verified.`);
		}
		const content = stepVerificationSignatureContent(current, performed, records.batch);
		const sig = await signRecord(uow, proof, { meaning: 'verified', entityType: 'step-verification', entityId: id, batchId: records.batch.id, content });
		const row = { id, batchId: records.batch.id, stepKey: sp.key, entryId: current.id, verifiedBy: req.user.id, verifiedByName: req.user.name, verifiedAt: sig.at, signatureId: sig.id };
		await uow.tx.insert(stepVerification).values(row);
		await uow.audit({ action: 'batch.step.verify', entityType: 'step-verification', entityId: id, batchId: records.batch.id, after: row });
		const status = progressOf({ ...records, verifications: [...records.verifications, row] }).complete ? 'awaiting-review' : 'in-progress';
		const version = await bumpBatch(uow, records, status);
		return { version, status };
	});
}
