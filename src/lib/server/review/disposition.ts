import type { Database } from '../db/client';
import { batchDisposition } from '../db/schema';
import { runUnitOfWork } from '../work';
import { actorOf } from '../auth/account';
import type { SessionInfo, SessionUser } from '../auth/types';
import type { RelyingParty } from '../auth/passkey';
import { signRecord, verifySigner, type SignatureCredentials } from '../signatures/ceremony';
import { bumpBatchVersion } from '../batches/state';
import { openDeviationsOf } from '../deviations';
import { createCheckpoint, type SignedCheckpoint } from '../audit/checkpoint';
import { queueNotification } from '../mail';
import { checkDisposition, type DispositionDecision, type GateResult } from '$lib/domain/disposition';
import { ReviewError } from './errors';
import { dispositionFactsOf, loadReviewRecords, reviewItemsOf, type ReviewRecords } from './records';

export interface DispositionRequest {
	user: SessionUser;
	session: SessionInfo | null;
	address: string;
	relyingParty?: RelyingParty;
	batchId: string;
	decision: DispositionDecision;
	comment?: string | null;
	/** The batch version the signer saw: a release of a batch that changed since is refused. */
	expectedVersion?: number;
	credentials: SignatureCredentials;
}

export interface DispositionResult {
	decision: DispositionDecision;
	signatureId: string;
	status: DispositionDecision;
	version: number;
	/** The signed ledger checkpoint taken after the disposition committed (design.md), or null if it failed. */
	checkpoint: SignedCheckpoint | null;
}

/** What is signed (11.70): the batch, its frozen master snapshot, the decision, the comment, and what was reviewed. */
export function dispositionSignatureContent(r: ReviewRecords, decision: DispositionDecision, comment: string | null) {
	const b = r.records.batch;
	return {
		type: 'rimebook.batch.disposition',
		batchId: b.id,
		number: b.number,
		snapshotHash: b.snapshotHash,
		version: b.version,
		decision,
		comment,
		entries: r.records.entries.map((e) => e.id).sort(),
		verifications: r.records.verifications.map((v) => v.id).sort(),
		deviations: r.records.deviations.map((d) => ({ id: d.id, status: d.status })).sort((x, y) => x.id.localeCompare(y.id)),
		reviewed: r.marks.map((m) => ({ key: m.itemKey, hash: m.itemHash })).sort((x, y) => x.key.localeCompare(y.key) || x.hash.localeCompare(y.hash))
	};
}

/** Every open gate for this signer and decision, as the gate function judges the records. */
export async function judgeDisposition(r: ReviewRecords, signer: SessionUser, decision: DispositionDecision, comment: string | null | undefined, openDeviations?: { number: string; status: string }[]): Promise<GateResult> {
	const facts = dispositionFactsOf(r, reviewItemsOf(r), signer, decision, comment);
	return checkDisposition(openDeviations ? { ...facts, openDeviations } : facts);
}

function refuse(result: GateResult, decision: DispositionDecision): never {
	const codes = result.reasons.map((x) => `${x.code}${x.subjects.length ? ` (${x.subjects.join(', ')})` : ''} [${x.clause}]`);
	throw new ReviewError('gates-open', `The batch cannot be ${decision} now: ${codes.join('; ')}.`, result.reasons);
}

/**
 * Releases or rejects a batch with QA's e-signature (21 CFR 211.192, 211.22(a), 11.50, 11.70;
 * Annex 11, 15). The gates are checked before the ceremony, then again inside the unit of work
 * under the batch's row lock (DEV's openDeviationsOf in the same transaction), so nothing that
 * changed in between slips through. One unit of work: the disposition row, the signature, the
 * batch's final status and version, the audit event and the notification. After it commits a
 * signed ledger checkpoint is taken (design.md: "at each batch release"); the batch is read-only
 * from then on (every writer checks isBatchOpen; trigger batch_disposed keeps the row final).
 */
export async function disposeBatch(db: Database, req: DispositionRequest): Promise<DispositionResult> {
	const comment = req.comment?.trim() || null;
	if (comment && comment.length > 2000) throw new ReviewError('invalid-input', 'A comment is at most 2000 characters.');
	const before = await loadReviewRecords(db, req.batchId);
	if (!before) throw new ReviewError('not-found', 'There is no such batch.');
	if (req.expectedVersion !== undefined && req.expectedVersion !== before.records.batch.version) throw new ReviewError('stale-version', `Batch ${before.records.batch.number} changed since you looked at it. Nothing was signed; look at the latest state first.`);
	const first = await judgeDisposition(before, req.user, req.decision, comment);
	if (!first.allowed) refuse(first, req.decision);
	const proof = await verifySigner(db, { signer: req.user, session: req.session, meaning: req.decision, credentials: req.credentials, address: req.address, relyingParty: req.relyingParty });
	const result = await runUnitOfWork(db, actorOf(req.user), async (uow) => {
		const r = await loadReviewRecords(uow.tx, req.batchId, { lock: true });
		if (!r) throw new ReviewError('not-found', 'There is no such batch.');
		const b = r.records.batch;
		// Someone wrote between the first check and the lock: what was judged is not what would be signed.
		if (b.version !== before.records.batch.version) throw new ReviewError('stale-version', `Batch ${b.number} changed while you were signing. Nothing was signed; look at the latest state first.`);
		const open = await openDeviationsOf(uow.tx, b.id);
		const gate = await judgeDisposition(r, req.user, req.decision, comment, open);
		if (!gate.allowed) refuse(gate, req.decision);
		const sig = await signRecord(uow, proof, { meaning: req.decision, entityType: 'batch', entityId: b.id, batchId: b.id, content: dispositionSignatureContent(r, req.decision, comment) });
		const row = { batchId: b.id, decision: req.decision, comment, signatureId: sig.id, decidedBy: req.user.id, decidedByName: req.user.name, decidedAt: sig.at };
		await uow.tx.insert(batchDisposition).values(row);
		const version = await bumpBatchVersion(uow.tx, b.id, req.decision);
		await uow.audit({
			action: req.decision === 'released' ? 'disposition.release' : 'disposition.reject',
			entityType: 'batch',
			entityId: b.id,
			batchId: b.id,
			before: { status: b.status, version: b.version },
			after: { ...row, status: req.decision, version },
			reason: comment
		});
		await queueNotification(uow, {
			kind: 'batch-disposed',
			batchId: b.id,
			subject: `Batch ${b.number} ${req.decision}`,
			text: `Batch ${b.number} was ${req.decision} by ${req.user.name} at ${sig.at}.${comment ? ` Comment: ${comment}` : ''}`,
			toRoles: ['qa', 'supervisor']
		});
		return { decision: req.decision, signatureId: sig.id, status: req.decision, version };
	});
	let checkpoint: SignedCheckpoint | null = null;
	try {
		checkpoint = await createCheckpoint(db);
	} catch (err) {
		// The disposition stands (it committed); the scheduled checkpoint covers it later.
		console.error(`[review] the checkpoint after the disposition of batch ${req.batchId} failed:`, err instanceof Error ? err.message : err);
	}
	return { ...result, checkpoint };
}
