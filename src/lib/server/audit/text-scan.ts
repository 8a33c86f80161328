/**
 * The verifier's fast path over one batch read as a handful of long strings instead of one JS
 * value per row (batch-verify.ts): the database concatenates each column of the batch with
 * string_agg, so a batch of 20,000 events crosses from the database to JavaScript as five values.
 *
 * Layout: `rows` = count(*); `seqs` = the seqs joined by ","; `prevHashes` and `hashes` joined by
 * ","; `canonicals` = the canonical texts joined by "\n". The separators cannot be confused with
 * the data of a good row (seq is decimal, the hashes are hex, and RFC 8785 text has no raw line
 * feed: JSON escapes U+000A inside strings and the canonical form has no whitespace). A forged row
 * that holds a separator splits into more pieces than `rows`, which fails the batch, so the split
 * is exact whenever a batch is accepted.
 *
 * It is only a sound "every row is good" check: it accepts a batch only when ChainScanner.feed
 * (chain.ts) would accept every row of it — seq is the next one, prev_hash equals the last hash,
 * the payload ends `,"seq":<seq>}`, and SHA-256(prev_hash ‖ canonical) in lowercase hex equals the
 * stored hash. On anything else it says "not ok" and the caller classifies the break with the
 * exact rules from the batch's start, so the report is the same as the row-by-row engine's.
 *
 * The strings are hashed as UTF-8 (node:crypto's default for strings), which gives back the
 * stored bytes: PostgreSQL text in a UTF8 database is valid UTF-8, and the drivers decode it as such.
 *
 * Self-contained on purpose (no imports, no helpers, no closures): its source text is also run in a
 * worker thread (batch-verify.ts), which passes `createHash` from its own node:crypto.
 */
export interface TextBatch {
	rows: number;
	seqs: string | null;
	prevHashes: string | null;
	hashes: string | null;
	canonicals: string | null;
}

export interface TextScanStart {
	/** The seq the batch's first row must have. */
	expected: number;
	/** The hash the batch's first row must link to (64 lowercase hex digits). */
	lastHash: string;
}

export interface TextScanResult {
	ok: boolean;
	/** Rows in the batch (all of them when ok). */
	rows: number;
	/** When ok: the seq the next batch must start with, and the hash it must link to. */
	expected: number;
	lastHash: string;
}

type HashFactory = (algorithm: string) => { update(data: string): { update(data: string): { digest(encoding: 'hex'): string } } };

export function scanTextBatch(batch: TextBatch, start: TextScanStart, createHash: HashFactory): TextScanResult {
	const notOk = { ok: false, rows: 0, expected: start.expected, lastHash: start.lastHash };
	const n = batch.rows;
	if (!Number.isSafeInteger(n) || n < 0) return notOk;
	if (n === 0) return { ok: true, rows: 0, expected: start.expected, lastHash: start.lastHash };
	if (batch.seqs === null || batch.prevHashes === null || batch.hashes === null || batch.canonicals === null) return notOk;
	const seqs = batch.seqs.split(',');
	const prevHashes = batch.prevHashes.split(',');
	const hashes = batch.hashes.split(',');
	const canonicals = batch.canonicals.split('\n');
	if (seqs.length !== n || prevHashes.length !== n || hashes.length !== n || canonicals.length !== n) return notOk;
	let expected = start.expected;
	let last = start.lastHash;
	for (let i = 0; i < n; i++) {
		const seq = String(expected);
		if (seqs[i] !== seq || prevHashes[i] !== last) return notOk;
		const canonical = canonicals[i];
		// RFC 8785 3.2.3 sorts "seq" last, so the payload's own seq is its final member.
		if (!canonical.endsWith(',"seq":' + seq + '}')) return notOk;
		const hash = hashes[i];
		if (createHash('sha256').update(last).update(canonical).digest('hex') !== hash) return notOk;
		last = hash;
		expected += 1;
	}
	return { ok: true, rows: n, expected, lastHash: last };
}
