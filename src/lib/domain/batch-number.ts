/**
 * Batch numbers: unique, and in the site's own format (a configurable pattern). A pattern is text
 * with placeholders:
 *
 *   {product}  the product code's first part (TAV-020-LY → TAV)
 *   {code}     the whole product code
 *   {yyyy} {yy} the year of issue in the site's time zone
 *   {seq:N}    a sequence number, N digits zero-padded (N = 1…8), exactly once
 *
 * The sequence counts up within everything else the pattern renders: with the default
 * `{product}-{yyyy}-{seq:4}` it restarts at 0001 for each product and year (TAV-2026-0001).
 * 21 CFR 211.188 and EU GMP Chapter 4 want a distinctive number per batch; the database's unique
 * index is the last word, this module only proposes and checks.
 */

export const DEFAULT_BATCH_NUMBER_PATTERN = '{product}-{yyyy}-{seq:4}';

/** What a batch number may contain: letters, digits, and . _ / - inside (1–40 characters). */
export const BATCH_NUMBER_PATTERN = /^[A-Za-z0-9][A-Za-z0-9._/-]{0,39}$/;

export type PatternPart = { literal: string } | { token: 'product' | 'code' | 'yyyy' | 'yy' } | { token: 'seq'; digits: number };

export type PatternResult = { ok: true; parts: PatternPart[] } | { ok: false; message: string };

const TOKEN = /\{([a-z]+)(?::(\d+))?\}/g;

/** Parses a numbering pattern, naming what is wrong with it. */
export function parseNumberPattern(pattern: string): PatternResult {
	const parts: PatternPart[] = [];
	let last = 0;
	let seqCount = 0;
	for (const m of pattern.matchAll(TOKEN)) {
		if (m.index > last) parts.push({ literal: pattern.slice(last, m.index) });
		const [, name, digits] = m;
		if (name === 'seq') {
			const n = digits === undefined ? 4 : Number(digits);
			if (!(n >= 1 && n <= 8)) return { ok: false, message: `{seq:${digits}}: give 1 to 8 digits` };
			parts.push({ token: 'seq', digits: n });
			seqCount += 1;
		} else if (name === 'product' || name === 'code' || name === 'yyyy' || name === 'yy') {
			if (digits !== undefined) return { ok: false, message: `{${name}} takes no digits` };
			parts.push({ token: name });
		} else {
			return { ok: false, message: `{${name}} is not a placeholder; use {product}, {code}, {yyyy}, {yy} or {seq:N}` };
		}
		last = m.index + m[0].length;
	}
	if (last < pattern.length) parts.push({ literal: pattern.slice(last) });
	if (seqCount !== 1) return { ok: false, message: 'the pattern needs exactly one {seq:N}' };
	const literal = parts.flatMap((p) => ('literal' in p ? [p.literal] : [])).join('');
	if (/[{}]/.test(literal)) return { ok: false, message: 'a { or } that is not part of a placeholder' };
	if (!/^[A-Za-z0-9._/-]*$/.test(literal)) return { ok: false, message: 'fixed text may hold only letters, digits and . _ / -' };
	return { ok: true, parts };
}

export interface NumberContext {
	productCode: string;
	/** Year of issue in the site's time zone. */
	year: number;
}

/** The product code's first part, upper case: TAV-020-LY → TAV. */
export function productPrefix(productCode: string): string {
	return (productCode.split(/[-._/]/)[0] || productCode).toUpperCase();
}

function renderToken(part: PatternPart, ctx: NumberContext): string {
	if ('literal' in part) return part.literal;
	switch (part.token) {
		case 'product':
			return productPrefix(ctx.productCode);
		case 'code':
			return ctx.productCode;
		case 'yyyy':
			return String(ctx.year).padStart(4, '0');
		case 'yy':
			return String(ctx.year % 100).padStart(2, '0');
		case 'seq':
			return '';
	}
}

/** What the number looks like around its sequence: the scope the sequence counts in. */
export function sequenceScope(parts: PatternPart[], ctx: NumberContext): { before: string; after: string; digits: number } {
	const at = parts.findIndex((p) => 'token' in p && p.token === 'seq');
	const seq = parts[at] as { token: 'seq'; digits: number };
	return {
		before: parts.slice(0, at).map((p) => renderToken(p, ctx)).join(''),
		after: parts.slice(at + 1).map((p) => renderToken(p, ctx)).join(''),
		digits: seq.digits
	};
}

/** The sequence number of an existing batch number in this scope, or null if it is not one of its numbers. */
export function sequenceOf(number: string, scope: { before: string; after: string }): number | null {
	if (!number.startsWith(scope.before) || !number.endsWith(scope.after)) return null;
	const middle = number.slice(scope.before.length, number.length - scope.after.length);
	return /^\d{1,12}$/.test(middle) ? Number(middle) : null;
}

/**
 * The next batch number: one above the highest sequence already used in the scope. A sequence
 * that outgrows its digits keeps counting with more digits rather than repeating a number.
 */
export function nextBatchNumber(pattern: string, ctx: NumberContext, existing: Iterable<string>): string {
	const parsed = parseNumberPattern(pattern);
	if (!parsed.ok) throw new RangeError(parsed.message);
	const scope = sequenceScope(parsed.parts, ctx);
	let highest = 0;
	for (const n of existing) {
		const s = sequenceOf(n, scope);
		if (s !== null && s > highest) highest = s;
	}
	return `${scope.before}${String(highest + 1).padStart(scope.digits, '0')}${scope.after}`;
}

/** An example number of a pattern, for the settings form. */
export function exampleBatchNumber(pattern: string, ctx: NumberContext): string | null {
	return parseNumberPattern(pattern).ok ? nextBatchNumber(pattern, ctx, []) : null;
}
