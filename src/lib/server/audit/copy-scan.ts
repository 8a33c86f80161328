/**
 * The verifier's fast path over PostgreSQL's binary COPY output (PostgreSQL 15 docs, "COPY",
 * section "Binary Format": an 11-byte signature "PGCOPY\n\377\r\n\0", an int32 flags field, an
 * int32 header-extension length and that many bytes; then per tuple an int16 field count and per
 * field an int32 length (-1 for NULL) and the bytes; a trailer int16 -1). All integers are in
 * network byte order.
 *
 * The tuples are (seq int8, prev_hash text, hash text, canonical text) in seq order. The bytes of
 * the text fields are hashed straight from the buffer, never decoded to strings, which is what
 * makes this path cheap.
 *
 * It is only a sound "every row is good" check: it accepts a batch only when ChainScanner.feed
 * (chain.ts) would accept every row of it — seq is the next one, prev_hash equals the last hash,
 * the payload ends `,"seq":<seq>}`, and SHA-256(prev_hash ‖ canonical) in lowercase hex equals
 * the stored hash. On anything else it says "not ok" and the caller classifies the break with
 * the exact rules from the batch's start, so the report is the same as the app engine's.
 *
 * Self-contained on purpose (no imports, no helpers, no closures): its source text is also run
 * in a worker thread (copy-verify.ts), which receives `createHash` from its own node:crypto.
 */
export interface CopyScanStart {
	/** The seq the batch's first row must have. */
	expected: number;
	/** The hash the batch's first row must link to (64 lowercase hex digits). */
	lastHash: string;
}

export interface CopyScanResult {
	ok: boolean;
	/** Rows in the batch (all of them when ok). */
	rows: number;
	/** When ok: the seq the next batch must start with, and the hash it must link to. */
	expected: number;
	lastHash: string;
}

type HashFactory = (algorithm: string) => { update(data: Uint8Array): { update(data: Uint8Array): { digest(encoding: 'hex'): string } } };

export function scanCopyBatch(bytes: Uint8Array, start: CopyScanStart, createHash: HashFactory): CopyScanResult {
	const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
	const buf = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
	const end = bytes.byteLength;
	if (end < 21 || buf.toString('latin1', 0, 11) !== 'PGCOPY\n\xff\r\n\0') throw new Error('The verifier read something that is not PostgreSQL binary COPY output.');
	// Flags bit 16: OIDs included (never asked for); bits 0-15 are reserved and must be zero.
	if ((view.getInt32(11) & 0x0001ffff) !== 0) throw new Error('The binary COPY output has flags the verifier does not know.');
	let off = 19 + view.getInt32(15);
	let expected = start.expected;
	let last: Buffer = Buffer.from(start.lastHash, 'latin1');
	let rows = 0;
	const notOk = { ok: false, rows: 0, expected: start.expected, lastHash: start.lastHash };
	for (;;) {
		if (off + 2 > end) return notOk;
		const fields = view.getInt16(off);
		off += 2;
		if (fields === -1) break;
		if (fields !== 4 || off + 12 > end || view.getInt32(off) !== 8) return notOk;
		const seq = view.getInt32(off + 4) * 4294967296 + view.getUint32(off + 8);
		off += 12;
		if (off + 4 > end) return notOk;
		const prevLength = view.getInt32(off);
		const prevAt = off + 4;
		off = prevAt + prevLength;
		if (prevLength !== 64 || off + 4 > end) return notOk;
		const hashLength = view.getInt32(off);
		const hashAt = off + 4;
		off = hashAt + hashLength;
		if (hashLength !== 64 || off + 4 > end) return notOk;
		const canonicalLength = view.getInt32(off);
		const canonicalAt = off + 4;
		off = canonicalAt + canonicalLength;
		if (canonicalLength < 0 || off > end) return notOk;
		if (seq !== expected || buf.compare(last, 0, 64, prevAt, prevAt + 64) !== 0) return notOk;
		// RFC 8785 3.2.3 sorts "seq" last, so the payload's own seq is its final member.
		const suffix = ',"seq":' + seq + '}';
		if (canonicalLength < suffix.length || buf.toString('latin1', off - suffix.length, off) !== suffix) return notOk;
		const digest = createHash('sha256')
			.update(buf.subarray(prevAt, prevAt + 64))
			.update(buf.subarray(canonicalAt, off))
			.digest('hex');
		if (digest !== buf.toString('latin1', hashAt, hashAt + 64)) return notOk;
		last = buf.subarray(hashAt, hashAt + 64);
		expected += 1;
		rows += 1;
	}
	return { ok: true, rows, expected, lastHash: last.toString('latin1') };
}
