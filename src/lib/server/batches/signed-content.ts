import type { Batch, MasterRecord, Signature, StepEntry } from '../db/schema';
import { isSignatureBound } from '../signatures/query';
import { issueSignatureContent } from '../masters/issue';

/**
 * The exact content each batch signature binds (21 CFR 11.70), built from the stored rows so it
 * can be rebuilt at any time and compared with the signature's contentHash (11.10(a): altered
 * records are detected). The writers sign what these return; the batch view checks them.
 */

type EntryFacts = Pick<StepEntry, 'id' | 'stepKey' | 'values' | 'calculations' | 'outOfLimits' | 'comment' | 'reasonCode' | 'supersedes' | 'workedAt'>;
type BatchFacts = Pick<Batch, 'id' | 'number' | 'snapshotHash'>;

/**
 * An instant as ISO 8601 UTC with milliseconds, whether written by JS (`…T…Z`) or read back from a
 * PostgreSQL timestamptz in string mode (`2026-01-02 03:04:05.6+00`).
 */
export function isoInstant(text: string): string {
	const iso = text.includes('T') ? text : text.replace(' ', 'T').replace(/([+-]\d\d)$/, '$1:00');
	const at = new Date(iso);
	if (Number.isNaN(at.getTime())) throw new TypeError(`'${text}' is not an instant.`);
	return at.toISOString();
}

/** What a "performed" signature binds: the whole entry (values, calculations, flags, comment, reason, what it supersedes, when). */
export function stepEntrySignatureContent(entry: EntryFacts, b: BatchFacts) {
	return {
		batchId: b.id,
		batchNumber: b.number,
		snapshotHash: b.snapshotHash,
		stepKey: entry.stepKey,
		entryId: entry.id,
		values: entry.values,
		calculations: entry.calculations,
		outOfLimits: entry.outOfLimits,
		comment: entry.comment,
		reasonCode: entry.reasonCode ?? null,
		supersedes: entry.supersedes ?? null,
		workedAt: isoInstant(entry.workedAt)
	};
}

/**
 * What a "verified" signature binds: the entry verified in full and the "performed" signature on
 * it (its id and content hash), so the countersignature covers exactly what was performed and
 * signed (21 CFR 11.70; 211.188(b)(11)).
 */
export function stepVerificationSignatureContent(entry: EntryFacts, performed: Pick<Signature, 'id' | 'contentHash'>, b: BatchFacts) {
	return {
		kind: 'step-verification',
		batchId: b.id,
		batchNumber: b.number,
		stepKey: entry.stepKey,
		entryId: entry.id,
		performedSignatureId: performed.id,
		performedContentHash: performed.contentHash,
		entry: stepEntrySignatureContent(entry, b)
	};
}

/** What the "issued" signature of a batch binds (as masters/issue.ts signs it). */
export function batchIssueSignatureContent(b: Pick<Batch, 'id' | 'number' | 'masterRecordId' | 'snapshotHash' | 'batchSize' | 'batchSizeUnit'>, master: Pick<MasterRecord, 'code' | 'version'>) {
	// The one definition of what "issued" signs lives with issuance; this only maps a stored batch onto it.
	return issueSignatureContent({ batchId: b.id, number: b.number, masterRecordId: b.masterRecordId, code: master.code, version: master.version, snapshotHash: b.snapshotHash, batchSize: b.batchSize, batchSizeUnit: b.batchSizeUnit });
}

/**
 * Whether a signature is the one expected on a record (type, id, meaning) and its content hash is
 * that of the content rebuilt now. A missing signature is not bound.
 */
export function isBoundTo(sig: Signature | undefined, expected: { entityType: string; entityId: string; meaning: string }, content: unknown): boolean {
	if (!sig) return false;
	if (sig.entityType !== expected.entityType || sig.entityId !== expected.entityId || sig.meaning !== expected.meaning) return false;
	return isSignatureBound(sig, content);
}
