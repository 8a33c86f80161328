import fc from 'fast-check';

/**
 * Hostile values for property tests (OWASP ASVS 5.0 V1/V2 input handling; OWASP Testing Guide
 * WSTG-INPV: injection, path traversal; Unicode TR36 "Unicode Security Considerations": bidi
 * overrides, lone surrogates, combining marks, NUL). Everything carries MARKER so a reflected
 * value can be found again in an answer and checked for escaping.
 */
export const MARKER = 'rbk7x';

/** Runs per route handler: short in `npm test`, FC_RUNS=… for soak. */
export const FC_RUNS = Math.max(1, Number(process.env.FC_RUNS ?? 20));

/** A script payload that must never come back raw in HTML. */
export const SCRIPT = `<script>${MARKER}()</script>`;

const fixed: string[] = [
	SCRIPT,
	`"><img src=x onerror=${MARKER}()>`,
	`javascript:${MARKER}()`,
	`' OR '1'='1' -- ${MARKER}`,
	`'; DROP TABLE batch; -- ${MARKER}`,
	`${MARKER}'); delete from audit_event; --`,
	`../../../../etc/passwd`,
	`..\\..\\..\\windows\\win.ini`,
	`%2e%2e%2f%2e%2e%2fetc%2fpasswd`,
	`/dev/zero`,
	`${MARKER}\u0000nul`,
	`${MARKER}\u202Egnp.exe`, // RIGHT-TO-LEFT OVERRIDE (Unicode TR36 §2.4)
	`${MARKER}\u2066\u2067\u2068\u2069`,
	`${MARKER}\uD800`, // lone high surrogate
	`\uDC00${MARKER}`, // lone low surrogate
	`e\u0301\u0301\u0301\u0301\u0301${MARKER}`, // stacked combining marks
	`${MARKER}\uFEFF\u200B\u200D`,
	`${MARKER}\r\nSet-Cookie: x=1`,
	`{{7*7}}\${7*7}${MARKER}`,
	`%s%s%n${MARKER}`,
	'__proto__',
	'constructor',
	`${MARKER}${'\u{1F9CA}'.repeat(50)}`,
	'NaN',
	'-1',
	'1e309',
	'0x7fffffff',
	'',
	' ',
	'null'
];

/** Strings a client should never be able to hurt us with. */
export const hostileString: fc.Arbitrary<string> = fc.oneof(
	{ weight: 4, arbitrary: fc.constantFrom(...fixed) },
	{ weight: 2, arbitrary: fc.string({ unit: 'binary', maxLength: 40 }).map((s) => `${MARKER}${s}`) },
	{ weight: 1, arbitrary: fc.string({ unit: fc.constantFrom('\u0000', '\uD800', '\uDFFF', '\u202E', '\u0301', '<', '>', '"', "'", '&', '\\'), maxLength: 30 }) },
	{ weight: 1, arbitrary: fc.integer({ min: 1_000, max: 300_000 }).map((n) => MARKER + 'A'.repeat(n)) }
);

/** Any JSON value, with hostile strings and numbers at the edges. */
export const hostileValue: fc.Arbitrary<unknown> = fc.letrec<{ v: unknown }>((tie) => ({
	v: fc.oneof(
		{ depthSize: 'small', withCrossShrink: true },
		hostileString,
		fc.constantFrom(null, true, false, 0, -0, -1, 1.5, 2 ** 53 + 1, -(2 ** 63), 1e308, Number.MIN_VALUE),
		fc.integer(),
		fc.array(tie('v'), { maxLength: 4 }),
		fc.dictionary(hostileString.filter((k) => k.length < 60), tie('v'), { maxKeys: 4 })
	)
})).v;

/**
 * A JSON object: the route's known field names (and others) with hostile values; or, if the
 * route gives a plausible body, that body with fields replaced, removed or retyped.
 */
export function hostileObject(keys: string[], base?: Record<string, unknown>): fc.Arbitrary<Record<string, unknown>> {
	const key = keys.length ? fc.oneof(fc.constantFrom(...keys), hostileString.filter((k) => k.length < 60)) : hostileString.filter((k) => k.length < 60);
	const random = fc.dictionary(key, hostileValue, { maxKeys: 8 });
	if (!base) return random;
	const baseKeys = Object.keys(base);
	const mutated = fc
		.record({ replace: fc.subarray(baseKeys), drop: fc.subarray(baseKeys, { maxLength: 1 }), values: fc.array(hostileValue, { minLength: baseKeys.length, maxLength: baseKeys.length }), extra: fc.option(fc.tuple(hostileString.filter((k) => k.length < 60), hostileValue)) })
		.map(({ replace, drop, values, extra }) => {
			const out: Record<string, unknown> = structuredClone(base);
			replace.forEach((k) => (out[k] = values[baseKeys.indexOf(k)]));
			drop.forEach((k) => delete out[k]);
			if (extra) out[extra[0]] = extra[1];
			return out;
		});
	return fc.oneof({ weight: 1, arbitrary: random }, { weight: 3, arbitrary: mutated });
}

export type BodySpec =
	| { kind: 'none' }
	| { kind: 'json'; text: string; contentType: string }
	| { kind: 'bytes'; bytes: Uint8Array; contentType: string; declaredLength?: number }
	| { kind: 'form'; fields: [string, string | { name: string; bytes: Uint8Array; type: string }][]; encoding: 'multipart' | 'urlencoded' }
	| { kind: 'broken-form'; text: string; contentType: string };

const contentTypes = ['application/json', 'text/plain', 'application/x-www-form-urlencoded', 'multipart/form-data', 'application/octet-stream', 'text/html; charset=utf-7', 'application/json; charset=latin1', ''];

/** A JSON route's body: hostile objects, bad JSON text, wrong content types, oversized bodies. */
export function jsonBody(keys: string[], base?: Record<string, unknown>): fc.Arbitrary<BodySpec> {
	return fc.oneof(
		{ weight: 5, arbitrary: fc.tuple(hostileObject(keys, base), fc.constantFrom(...contentTypes)).map(([o, ct]): BodySpec => ({ kind: 'json', text: JSON.stringify(o), contentType: ct || 'application/json' })) },
		{ weight: 1, arbitrary: hostileValue.map((v): BodySpec => ({ kind: 'json', text: JSON.stringify(v) ?? 'undefined', contentType: 'application/json' })) },
		{ weight: 1, arbitrary: fc.constantFrom('{', '{"a":', '[1,2', 'nul', '\u0000', '{"__proto__":{"admin":true}}', '{"a":1e99999}', '"\\ud800"', '{"a":"\\u0000"}', '[' .repeat(5000) + ']'.repeat(5000)).map((text): BodySpec => ({ kind: 'json', text, contentType: 'application/json' })) },
		{ weight: 1, arbitrary: fc.uint8Array({ maxLength: 200 }).map((bytes): BodySpec => ({ kind: 'bytes', bytes, contentType: 'application/json' })) },
		{ weight: 1, arbitrary: fc.integer({ min: 300_000, max: 3_000_000 }).map((n): BodySpec => ({ kind: 'json', text: JSON.stringify({ [keys[0] ?? 'x']: 'A'.repeat(n) }), contentType: 'application/json' })) },
		// A content-length that lies: declares little, sends much more (or the reverse).
		{ weight: 1, arbitrary: fc.integer({ min: 0, max: 10 }).map((declared): BodySpec => ({ kind: 'bytes', bytes: new TextEncoder().encode(JSON.stringify({ x: 'B'.repeat(400_000) })), contentType: 'application/json', declaredLength: declared })) },
		{ weight: 1, arbitrary: formBody(keys) }
	);
}

/** A form action's body: only form content types, as SvelteKit refuses others before any action runs. */
export function formBody(keys: string[], base?: Record<string, string>): fc.Arbitrary<BodySpec> {
	const name = keys.length ? fc.oneof({ weight: 4, arbitrary: fc.constantFrom(...keys) }, { weight: 1, arbitrary: hostileString.filter((k) => k.length < 60) }) : hostileString.filter((k) => k.length < 60);
	const file = fc.record({ name: fc.oneof(fc.constantFrom('../../etc/passwd', '..\\..\\boot.ini', `${MARKER}\u202Etxt.exe`, `${MARKER}\u0000.csv`, 'CON', '.htaccess', `${SCRIPT}.csv`), hostileString.filter((s) => s.length < 200)), bytes: fc.oneof(fc.uint8Array({ maxLength: 300 }), fc.integer({ min: 100_000, max: 6_000_000 }).map((n) => new Uint8Array(n).fill(0x41))), type: fc.constantFrom('text/csv', 'application/json', 'application/x-msdownload', 'image/svg+xml', 'text/html', '') });
	const value = fc.oneof({ weight: 6, arbitrary: hostileString }, { weight: 1, arbitrary: file });
	const random = fc.array(fc.tuple(name, value), { maxLength: 10 });
	const fields = base
		? fc.oneof(
				random,
				fc.record({ drop: fc.subarray(Object.keys(base), { maxLength: 1 }), swap: fc.subarray(Object.keys(base)), vals: fc.array(value, { minLength: Object.keys(base).length, maxLength: Object.keys(base).length }) }).map(({ drop, swap, vals }) =>
					Object.entries(base)
						.filter(([k]) => !drop.includes(k))
						.map(([k, v], i): [string, string | { name: string; bytes: Uint8Array; type: string }] => [k, swap.includes(k) ? vals[i] : v])
				)
			)
		: random;
	return fc.oneof(
		{ weight: 6, arbitrary: fc.tuple(fields, fc.constantFrom('multipart' as const, 'urlencoded' as const)).map(([f, encoding]): BodySpec => ({ kind: 'form', fields: f, encoding })) },
		{ weight: 1, arbitrary: fc.constantFrom('--x\r\nContent-Disposition: form-data; name="a"\r\n\r\nb', '--\r\n\r\n', 'a=%ZZ&b=%', '%00=%00').map((text): BodySpec => ({ kind: 'broken-form', text, contentType: text.startsWith('--') ? 'multipart/form-data; boundary=x' : 'application/x-www-form-urlencoded' })) },
		{ weight: 1, arbitrary: fc.constant<BodySpec>({ kind: 'broken-form', text: 'x', contentType: 'multipart/form-data' }) }
	);
}

/** A raw upload: hostile bytes, types and sizes. */
export const uploadBody: fc.Arbitrary<BodySpec> = fc.oneof(
	fc.tuple(fc.uint8Array({ maxLength: 2000 }), fc.constantFrom('application/pdf', 'image/png', 'text/plain', 'application/x-msdownload', 'image/svg+xml', 'text/html', '', 'multipart/form-data')).map(([bytes, contentType]): BodySpec => ({ kind: 'bytes', bytes, contentType })),
	fc.constantFrom(0, 20, 30).map((mb): BodySpec => ({ kind: 'bytes', bytes: new Uint8Array(mb * 1024 * 1024 + 1).fill(0x25), contentType: 'application/pdf' })),
	fc.constant<BodySpec>({ kind: 'bytes', bytes: new TextEncoder().encode(`<svg xmlns="http://www.w3.org/2000/svg"><script>${MARKER}()</script></svg>`), contentType: 'image/svg+xml' })
);

/** Turns a body into a Request. */
export function toRequest(url: URL, method: string, body: BodySpec, headers: Record<string, string> = {}): Request {
	const h = new Headers(headers);
	let payload: BodyInit | undefined;
	if (method === 'GET' || method === 'HEAD' || body.kind === 'none') payload = undefined;
	else if (body.kind === 'json') {
		payload = body.text;
		h.set('content-type', body.contentType);
	} else if (body.kind === 'bytes') {
		payload = body.bytes as Uint8Array<ArrayBuffer>;
		if (body.contentType) h.set('content-type', body.contentType);
		if (body.declaredLength !== undefined) h.set('content-length', String(body.declaredLength));
	} else if (body.kind === 'broken-form') {
		payload = body.text;
		h.set('content-type', body.contentType);
	} else if (body.encoding === 'urlencoded') {
		const p = new URLSearchParams();
		for (const [k, v] of body.fields) p.append(k, typeof v === 'string' ? v : v.name);
		payload = p;
	} else {
		const f = new FormData();
		for (const [k, v] of body.fields) f.append(k, typeof v === 'string' ? v : new File([v.bytes as Uint8Array<ArrayBuffer>], v.name, { type: v.type }));
		payload = f;
	}
	return new Request(url, { method, body: payload, headers: h });
}
