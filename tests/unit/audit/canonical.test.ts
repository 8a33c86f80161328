import { describe, expect, it } from 'vitest';
import { canonicalJson } from '$lib/domain/canonical';
import { AuditPayloadError, canonicalEvent, GENESIS_HASH, hashEvent, type HashedEvent } from '$lib/server/audit/ledger';
import { createHash } from 'node:crypto';

describe('RFC 8785 canonical JSON (the bytes the audit chain hashes)', () => {
	it('serialises the sample object of RFC 8785 3.2.2 and sorts it as 3.2.3 / 3.2.4 show', () => {
		// RFC 8785 3.2.2: the input object, written as a JS string so its number literals stay literal.
		const input = String.raw`{
			"numbers": [333333333.33333329, 1E30, 4.50, 2e-3, 0.000000000000000000000000001],
			"string": "\u20ac$\u000F\u000aA'\u0042\u0022\u005c\\\"\/",
			"literals": [null, true, false]
		}`;
		// RFC 8785 3.2.4 (the sorted canonical form whose UTF-8 bytes the RFC lists).
		const expected = String.raw`{"literals":[null,true,false],"numbers":[333333333.3333333,1e+30,4.5,0.002,1e-27],"string":"€$\u000f\nA'B\"\\\\\"/"}`;
		expect(canonicalJson(JSON.parse(input))).toBe(expected);
	});

	it('sorts property names by UTF-16 code units (RFC 8785 3.2.3 example)', () => {
		const input = {
			'\u20ac': 'Euro Sign',
			'\r': 'Carriage Return',
			'\ufb33': 'Hebrew Letter Dalet With Dagesh',
			'1': 'One',
			'\ud83d\ude00': 'Emoji: Grinning Face',
			'\u0080': 'Control',
			'\u00f6': 'Latin Small Letter O With Diaeresis'
		};
		const values = Object.values(JSON.parse(canonicalJson(input)) as Record<string, string>);
		// RFC 8785 3.2.3: the expected order of the values after sorting.
		const order = ['Carriage Return', 'One', 'Control', 'Latin Small Letter O With Diaeresis', 'Euro Sign', 'Emoji: Grinning Face', 'Hebrew Letter Dalet With Dagesh'];
		// Object.values reorders integer-like keys ("1") first, so compare on the raw text instead.
		expect(canonicalJson(input)).toBe(`{${order.map((v) => `${JSON.stringify(Object.entries(input).find(([, x]) => x === v)![0])}:${JSON.stringify(v)}`).join(',')}}`);
		expect(values).toHaveLength(7);
	});

	// RFC 8785 Appendix B: IEEE 754 double (hex) → its JSON number text.
	const appendixB: [string, string][] = [
		['0000000000000000', '0'],
		['8000000000000000', '0'],
		['0000000000000001', '5e-324'],
		['8000000000000001', '-5e-324'],
		['7fefffffffffffff', '1.7976931348623157e+308'],
		['ffefffffffffffff', '-1.7976931348623157e+308'],
		['4340000000000000', '9007199254740992'],
		['c340000000000000', '-9007199254740992'],
		['4430000000000000', '295147905179352830000'],
		['44b52d02c7e14af5', '9.999999999999997e+22'],
		['44b52d02c7e14af6', '1e+23'],
		['44b52d02c7e14af7', '1.0000000000000001e+23'],
		['444b1ae4d6e2ef4e', '999999999999999700000'],
		['444b1ae4d6e2ef4f', '999999999999999900000'],
		['444b1ae4d6e2ef50', '1e+21'],
		['3eb0c6f7a0b5ed8c', '9.999999999999997e-7'],
		['3eb0c6f7a0b5ed8d', '0.000001'],
		['41b3de4355555553', '333333333.3333332'],
		['41b3de4355555554', '333333333.33333325'],
		['41b3de4355555555', '333333333.3333333'],
		['41b3de4355555556', '333333333.3333334'],
		['41b3de4355555557', '333333333.33333343'],
		['becbf647612f3696', '-0.0000033333333333333333'],
		['43143ff3c1cb0959', '1424953923781206.2']
	];
	it.each(appendixB)('serialises the double 0x%s as %s (RFC 8785 Appendix B)', (hex, text) => {
		const value = new DataView(Uint8Array.from(Buffer.from(hex, 'hex')).buffer).getFloat64(0);
		expect(canonicalJson(value)).toBe(text);
	});

	it.each([
		['7fffffffffffffff', 'NaN'],
		['7ff0000000000000', 'Infinity']
	])('refuses the double 0x%s (%s), as RFC 8785 Appendix B and 3.2.2.3 require', (hex) => {
		const value = new DataView(Uint8Array.from(Buffer.from(hex, 'hex')).buffer).getFloat64(0);
		expect(() => canonicalJson(value)).toThrow();
	});
});

describe('the hashed audit event', () => {
	const event: HashedEvent = {
		seq: 1,
		at: '2026-12-01T08:15:30.123456Z',
		actorId: 'u-1',
		actorName: 'Maren Oakhurst',
		action: 'equipment.update',
		entityType: 'equipment',
		entityId: 'e-1',
		batchId: null,
		before: { status: 'in-service', shelves: 10 },
		after: { status: 'cleaning-due', shelves: 10.0 },
		reason: 'Cleaning after campaign'
	};

	it('ends with the seq member, since RFC 8785 3.2.3 sorts "seq" last among the event keys', () => {
		expect(canonicalEvent(event).endsWith(',"seq":1}')).toBe(true);
	});

	it('hashes prev_hash (64 hex ASCII) followed by the canonical UTF-8, as design.md defines (checked with node:crypto over the concatenation)', () => {
		const canonical = canonicalEvent(event);
		const expected = createHash('sha256').update(Buffer.from(GENESIS_HASH + canonical, 'utf8')).digest('hex');
		expect(hashEvent(GENESIS_HASH, canonical)).toBe(expected);
		// 10.0 and 10 are the same JSON number (RFC 8785 3.2.2.3): both print as 10.
		expect(canonical).toContain('"after":{"shelves":10,');
	});

	it('refuses text PostgreSQL jsonb cannot store (U+0000; PostgreSQL docs 8.14.1) and unpaired surrogates (RFC 8785 3.2.2.2)', () => {
		expect(() => canonicalEvent({ ...event, reason: 'a\u0000b' })).toThrow(AuditPayloadError);
		expect(() => canonicalEvent({ ...event, after: { note: '\ud800' } })).toThrow(AuditPayloadError);
		// An escaped backslash followed by "u0000" is ordinary text, not U+0000.
		expect(canonicalEvent({ ...event, reason: 'path\\u0000' })).toContain('path\\\\u0000');
	});
});
