import { randomUUID } from 'node:crypto';
import { eq, sql } from 'drizzle-orm';
import type { Database, Executor } from '../db/client';
import { pgErrorCode } from '../db/client';
import { batch, masterRecord } from '../db/schema';
import { runUnitOfWork } from '../work';
import { actorOf } from '../auth/account';
import type { RelyingParty } from '../auth/passkey';
import type { SessionInfo, SessionUser } from '../auth/types';
import { signRecord, verifySigner, type SignatureCredentials } from '../signatures/ceremony';
import { hashTemplate, scaleTemplate, validateTemplate } from '$lib/domain/template';
import { BATCH_NUMBER_PATTERN } from '$lib/domain/batch-number';
import type { Template } from '$lib/schemas/template';
import { MasterError } from './errors';
import { assertTransition } from './lifecycle';
import { findMaster } from './query';
import { proposeBatchNumber } from './numbering';

export interface IssueBatchInput {
	user: SessionUser;
	session: SessionInfo | null;
	masterRecordId: string;
	/** A number of QA's choosing; without it the next number of the site's format is taken. */
	batchNumber?: string;
	/** The actual batch size, in the unit of the master's nominal batch size. */
	batchSize: number;
	credentials: SignatureCredentials;
	/** Client address, for the signing attempt log. */
	address?: string;
	/** Needed only for a passkey signature. */
	relyingParty?: RelyingParty;
}

export interface IssuedBatch {
	batchId: string;
	number: string;
}

/** The facts an "issued" signature binds, each rebuildable from the batch row and its master (11.70). */
export interface IssueSignatureFacts {
	batchId: string;
	number: string;
	masterRecordId: string;
	code: string;
	version: number;
	snapshotHash: string;
	batchSize: number;
	batchSizeUnit: string;
}

/**
 * What the "issued" signature of a batch binds (11.70), exported so a page can rebuild it and
 * check the signature with isSignatureBound (signatures/query.ts).
 */
export function issueSignatureContent(f: IssueSignatureFacts) {
	return { kind: 'batch-issue', batchId: f.batchId, number: f.number, masterRecordId: f.masterRecordId, code: f.code, version: f.version, snapshotHash: f.snapshotHash, batchSize: f.batchSize, batchSizeUnit: f.batchSizeUnit };
}

// Serialises issuance so two batches never take the same proposed number (an arbitrary constant
// of our own, distinct from the ledger's); the unique index on batch.number is the last word.
const ISSUE_LOCK_KEY = 7_305_118_188;

/**
 * Issues an executed batch record (design.md, "The whole job", step 2; 21 CFR 211.186, 211.188):
 * QA picks the effective master version, a unique batch number and the actual batch size. The
 * batch gets a frozen snapshot of the template with its SHA-256 (the master's content hash: an
 * accurate copy, 211.188(a)) and the quantities scaled to the batch size (scaleTemplate). Signed
 * "issued" and audited in one unit of work.
 *
 * Throws MasterError: 400 `invalid` (batch size outside the validated range, a malformed number),
 * 403 `forbidden` (not QA), 404 `not-found`, 409 `wrong-state` (not effective: draft, superseded,
 * retired …) or `duplicate-number`; the ceremony's own refusals are AuthError (401/403/423).
 * Nothing is written when it throws.
 */
export async function issueBatch(db: Database, input: IssueBatchInput): Promise<IssuedBatch> {
	const master = await findMaster(db, input.masterRecordId);
	if (!master) throw new MasterError('not-found', 'No such master record.');
	assertTransition(input.user, master, 'issue');
	const template = master.template as Template;
	const scaled = checkIssuable(template, master.templateHash, input.batchSize);
	const wanted = input.batchNumber?.trim() || undefined;
	if (wanted !== undefined) {
		if (!BATCH_NUMBER_PATTERN.test(wanted)) {
			throw new MasterError('invalid', 'A batch number is 1–40 letters, digits or . _ / -.', [{ path: ['batchNumber'], code: 'batch-number.format', message: 'a batch number is 1–40 letters, digits or . _ / -' }]);
		}
		await refuseTaken(db, wanted);
	}
	const proof = await verifySigner(db, { signer: input.user, session: input.session, meaning: 'issued', credentials: input.credentials, address: input.address ?? 'unknown', relyingParty: input.relyingParty });
	try {
		return await runUnitOfWork(db, actorOf(input.user), async (uow) => {
			await uow.tx.execute(sql`select pg_advisory_xact_lock(${ISSUE_LOCK_KEY})`);
			// Again under the row lock: the master may have been retired or superseded meanwhile.
			const [locked] = await uow.tx.select().from(masterRecord).where(eq(masterRecord.id, master.id)).for('share');
			assertTransition(input.user, locked, 'issue');
			const number = wanted ?? (await proposeBatchNumber(uow.tx, locked.code));
			if (wanted) await refuseTaken(uow.tx, number);
			const batchId = randomUUID();
			const snapshot = locked.template as Template;
			const snapshotHash = hashTemplate(snapshot);
			const unit = snapshot.header.batchSize.unit;
			await uow.tx.insert(batch).values({
				id: batchId,
				number,
				masterRecordId: locked.id,
				status: 'issued',
				batchSize: input.batchSize,
				batchSizeUnit: unit,
				snapshot,
				snapshotHash,
				scaled,
				issuedBy: input.user.id
			});
			const content = issueSignatureContent({ batchId, number, masterRecordId: locked.id, code: locked.code, version: locked.version, snapshotHash, batchSize: input.batchSize, batchSizeUnit: unit });
			await signRecord(uow, proof, { meaning: 'issued', entityType: 'batch', entityId: batchId, batchId, content });
			await uow.audit({
				action: 'batch.issue',
				entityType: 'batch',
				entityId: batchId,
				batchId,
				after: { number, masterRecordId: locked.id, code: locked.code, version: locked.version, batchSize: input.batchSize, batchSizeUnit: unit, snapshotHash, ratio: scaled.ratio }
			});
			return { batchId, number };
		});
	} catch (err) {
		if (pgErrorCode(err) === '23505') throw new MasterError('duplicate-number', 'That batch number is taken already. Nothing was issued.');
		throw err;
	}
}

/** The checks that need no database: the stored template is intact and valid, the size in range. */
function checkIssuable(template: Template, templateHash: string, batchSize: number) {
	// 11.10(a): a master whose content no longer matches its hash is never issued.
	if (hashTemplate(template) !== templateHash) throw new MasterError('integrity', 'The stored master template does not match its hash; it was not issued.');
	const v = validateTemplate(template);
	if (!v.ok) throw new MasterError('invalid', 'The master template is not valid; it cannot be issued.', v.issues);
	if (!Number.isFinite(batchSize)) throw new MasterError('invalid', 'Give the batch size as a number.', [{ path: ['batchSize'], code: 'batch-size.not-positive', message: 'the batch size must be a positive number' }]);
	const s = scaleTemplate(v.template, { value: batchSize, unit: template.header.batchSize.unit });
	if (!s.ok) throw new MasterError('invalid', s.issues.map((i) => i.message).join('; '), s.issues);
	return s.scaled;
}

async function refuseTaken(db: Executor, number: string): Promise<void> {
	const [taken] = await db.select({ id: batch.id }).from(batch).where(eq(batch.number, number));
	if (taken) throw new MasterError('duplicate-number', `Batch number ${number} is taken already. Nothing was issued.`, [{ path: ['batchNumber'], code: 'batch-number.taken', message: `${number} is taken` }]);
}
