import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { createHash } from 'node:crypto';
import { canonicalJson } from '$lib/domain/canonical';
import { AuditPayloadError, canonicalEvent, canonicalParts, GENESIS_HASH, hashEvent, spliceCanonical, type HashedEvent } from '$lib/server/audit/ledger';
import { scanCopyBatch } from '$lib/server/audit/copy-scan';

// Invented values only. JSON-shaped values, as the ledger stores them.
const json = fc.jsonValue({ maxDepth: 3 }).map((v) => JSON.parse(JSON.stringify(v)) as unknown);
const textOrNull = fc.option(fc.string({ unit: 'grapheme' }), { nil: null });
const event = fc.record({
	seq: fc.integer({ min: 1, max: Number.MAX_SAFE_INTEGER }),
	at: fc.date({ min: new Date('2000-01-01T00:00:00Z'), max: new Date('2999-12-31T23:59:59Z'), noInvalidDate: true }).map((d) => d.toISOString().replace('Z', '123Z')),
	actorId: textOrNull,
	actorName: fc.string({ unit: 'grapheme' }),
	action: fc.string({ unit: 'grapheme' }),
	entityType: fc.string({ unit: 'grapheme' }),
	entityId: textOrNull,
	batchId: textOrNull,
	before: json,
	after: json,
	reason: textOrNull
});

describe('the two-part canonical text that rimebook_append_event splices', () => {
	it('joins to exactly the canonicalize package output for the whole event (RFC 8785 3.2.3: members sorted, each serialised alone)', () => {
		fc.assert(
			fc.property(event, (e: HashedEvent) => {
				const text = canonicalEvent(e);
				expect(text).toBe(canonicalJson(e));
				const { head, tail } = canonicalParts(e);
				expect(spliceCanonical(head, tail, e.at, e.seq)).toBe(text);
			}),
			{ numRuns: 2000 }
		);
	});

	it('puts "at" between "after" and "batchId" and "seq" last, as RFC 8785 3.2.3 sorts the keys', () => {
		const e: HashedEvent = { seq: 42, at: '2026-03-04T05:06:07.123456Z', actorId: null, actorName: 'Ilse Fenmark', action: 'x.y', entityType: 'x', entityId: null, batchId: 'b', before: null, after: { batchId: ',"batchId":' }, reason: null };
		expect(canonicalEvent(e)).toBe(
			'{"action":"x.y","actorId":null,"actorName":"Ilse Fenmark","after":{"batchId":",\\"batchId\\":"},"at":"2026-03-04T05:06:07.123456Z","batchId":"b","before":null,"entityId":null,"entityType":"x","reason":null,"seq":42}'
		);
	});

	it('refuses U+0000 and malformed times or seqs', () => {
		expect(() => canonicalParts({ actorId: null, actorName: 'a\u0000', action: 'a', entityType: 'e', entityId: null, batchId: null, before: null, after: null, reason: null })).toThrow(AuditPayloadError);
		expect(() => spliceCanonical('{"a":1', '"b":2', '2026-03-04T05:06:07Z', 1)).toThrow(AuditPayloadError);
		expect(() => spliceCanonical('{"a":1', '"b":2', '2026-03-04T05:06:07.000000Z', 0)).toThrow(AuditPayloadError);
	});
});

/** PostgreSQL binary COPY bytes of (seq int8, prev_hash, hash, canonical text) rows, per the PostgreSQL 15 docs, "COPY", "Binary Format". */
function copyBytes(rows: { seq: number; prev: string; hash: string; canonical: string }[]): Uint8Array {
	const parts: Buffer[] = [Buffer.from('PGCOPY\n\xff\r\n\0', 'latin1'), Buffer.alloc(8)];
	for (const r of rows) {
		const head = Buffer.alloc(2 + 4 + 8);
		head.writeInt16BE(4, 0);
		head.writeInt32BE(8, 2);
		head.writeBigInt64BE(BigInt(r.seq), 6);
		parts.push(head);
		for (const text of [r.prev, r.hash, r.canonical]) {
			const bytes = Buffer.from(text, 'utf8');
			const len = Buffer.alloc(4);
			len.writeInt32BE(bytes.length, 0);
			parts.push(len, bytes);
		}
	}
	const trailer = Buffer.alloc(2);
	trailer.writeInt16BE(-1, 0);
	parts.push(trailer);
	return new Uint8Array(Buffer.concat(parts));
}

function chain(n: number) {
	const rows: { seq: number; prev: string; hash: string; canonical: string }[] = [];
	let prev = GENESIS_HASH;
	for (let seq = 1; seq <= n; seq++) {
		const canonical = canonicalEvent({ seq, at: '2026-01-05T06:00:00.000000Z', actorId: 'u-1', actorName: 'Jörg Ålvhem', action: 'entry.record', entityType: 'batch-entry', entityId: `e-${seq}`, batchId: null, before: null, after: { v: seq / 10, note: 'µL ✓' }, reason: null });
		const hash = hashEvent(prev, canonical);
		rows.push({ seq, prev, hash, canonical });
		prev = hash;
	}
	return rows;
}

describe('scanCopyBatch over binary COPY bytes', () => {
	const rows = chain(20);
	it('accepts an intact batch and hands on the head', () => {
		expect(scanCopyBatch(copyBytes(rows), { expected: 1, lastHash: GENESIS_HASH }, createHash)).toEqual({ ok: true, rows: 20, expected: 21, lastHash: rows[19].hash });
		expect(scanCopyBatch(copyBytes(rows.slice(5)), { expected: 6, lastHash: rows[4].hash }, createHash)).toMatchObject({ ok: true, rows: 15 });
		expect(scanCopyBatch(copyBytes([]), { expected: 21, lastHash: rows[19].hash }, createHash)).toEqual({ ok: true, rows: 0, expected: 21, lastHash: rows[19].hash });
	});

	it('rejects a changed payload, hash, link, seq, payload seq or a gap (any of which the row scan classifies)', () => {
		const start = { expected: 1, lastHash: GENESIS_HASH };
		const bad = [
			rows.map((r, i) => (i === 7 ? { ...r, canonical: r.canonical.replace('Jörg', 'Jorg') } : r)),
			rows.map((r, i) => (i === 7 ? { ...r, hash: r.hash.toUpperCase() } : r)),
			rows.map((r, i) => (i === 7 ? { ...r, prev: 'f'.repeat(64) } : r)),
			rows.map((r, i) => (i === 7 ? { ...r, seq: 99 } : r)),
			rows.map((r, i) => (i === 7 ? { ...r, canonical: r.canonical.replace('"seq":8}', '"seq":08}'), hash: hashEvent(r.prev, r.canonical.replace('"seq":8}', '"seq":08}')) } : r)),
			rows.filter((_, i) => i !== 7)
		];
		for (const b of bad) expect(scanCopyBatch(copyBytes(b), start, createHash).ok).toBe(false);
		// A wrong starting link fails the first row.
		expect(scanCopyBatch(copyBytes(rows), { expected: 1, lastHash: 'e'.repeat(64) }, createHash).ok).toBe(false);
		// Truncated output is not accepted either.
		expect(scanCopyBatch(copyBytes(rows).subarray(0, 500), start, createHash).ok).toBe(false);
	});

	it('refuses bytes that are not binary COPY output', () => {
		expect(() => scanCopyBatch(new Uint8Array(Buffer.from('seq\tprev\n1\tx\n')), { expected: 1, lastHash: GENESIS_HASH }, createHash)).toThrow();
	});
});
