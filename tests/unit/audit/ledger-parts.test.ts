import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { createHash } from 'node:crypto';
import { canonicalJson } from '$lib/domain/canonical';
import { AuditPayloadError, canonicalEvent, canonicalParts, GENESIS_HASH, hashEvent, spliceCanonical, type HashedEvent } from '$lib/server/audit/ledger';
import { scanTextBatch, type TextBatch } from '$lib/server/audit/text-scan';

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
	}, 60_000); // property test: no speed claim, only room for the shared 2-core machine

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

// The batch as the database sends it (batch-verify.ts): count(*) and each column joined by
// string_agg — seqs, prev_hash and hash by ",", the canonical texts by "\n".
function textBatch(rows: { seq: number; prev: string; hash: string; canonical: string }[]): TextBatch {
	const join = (values: string[], sep: string) => (values.length === 0 ? null : values.join(sep));
	return {
		rows: rows.length,
		seqs: join(rows.map((r) => String(r.seq)), ','),
		prevHashes: join(rows.map((r) => r.prev), ','),
		hashes: join(rows.map((r) => r.hash), ','),
		canonicals: join(rows.map((r) => r.canonical), '\n')
	};
}

describe('scanTextBatch over string_agg batches', () => {
	const rows = chain(20);
	it('accepts an intact batch and hands on the head', () => {
		expect(scanTextBatch(textBatch(rows), { expected: 1, lastHash: GENESIS_HASH }, createHash)).toEqual({ ok: true, rows: 20, expected: 21, lastHash: rows[19].hash });
		expect(scanTextBatch(textBatch(rows.slice(5)), { expected: 6, lastHash: rows[4].hash }, createHash)).toMatchObject({ ok: true, rows: 15 });
		expect(scanTextBatch(textBatch([]), { expected: 21, lastHash: rows[19].hash }, createHash)).toEqual({ ok: true, rows: 0, expected: 21, lastHash: rows[19].hash });
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
		for (const b of bad) expect(scanTextBatch(textBatch(b), start, createHash).ok).toBe(false);
		// A wrong starting link fails the first row.
		expect(scanTextBatch(textBatch(rows), { expected: 1, lastHash: 'e'.repeat(64) }, createHash).ok).toBe(false);
		// A count that does not match the pieces (a NULL that string_agg skipped) is not accepted either.
		expect(scanTextBatch({ ...textBatch(rows), rows: 21 }, start, createHash).ok).toBe(false);
		expect(scanTextBatch({ ...textBatch(rows), hashes: null }, start, createHash).ok).toBe(false);
	});

	it('is not fooled by a forged row that holds a separator, even when the joined text is unchanged', () => {
		const start = { expected: 1, lastHash: GENESIS_HASH };
		// Move the boundary between two prev_hash values: the joined strings stay byte-identical
		// only if a separator is part of the data, which makes more pieces than rows.
		const moved = rows.map((r, i) => (i === 3 ? { ...r, prev: r.prev + ',' + rows[4].prev.slice(0, 10) } : i === 4 ? { ...r, prev: rows[4].prev.slice(10) } : r));
		expect(scanTextBatch(textBatch(moved), start, createHash).ok).toBe(false);
		// A raw line feed inside a payload (never in RFC 8785 output) splits it in two.
		const split = rows.map((r, i) => (i === 9 ? { ...r, canonical: r.canonical.replace(',"after"', '\n,"after"') } : r));
		expect(scanTextBatch(textBatch(split), start, createHash).ok).toBe(false);
	});
});
