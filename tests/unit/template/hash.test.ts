import { describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import canonicalize from 'canonicalize';
import { canonicalJson } from '$lib/domain/canonical';
import { demoTemplate, demoTemplateInput } from '$lib/domain/fixtures/demo-template';
import { exportTemplate, hashTemplate, importTemplate, templateContent, validateTemplate } from '$lib/domain/template';
import type { Template } from '$lib/schemas/template';

/** The same value with every object's keys in reverse order (a different JSON text). */
function reverseKeys(v: unknown): unknown {
	if (Array.isArray(v)) return v.map(reverseKeys);
	if (v && typeof v === 'object') return Object.fromEntries(Object.entries(v).reverse().map(([k, x]) => [k, reverseKeys(x)]));
	return v;
}

function parse(input: unknown): Template {
	const r = validateTemplate(input);
	if (!r.ok) throw new Error(JSON.stringify(r.issues));
	return r.template;
}

describe('canonical JSON (RFC 8785)', () => {
	// RFC 8785 §3.2.2, the example input and its canonical form as printed in the RFC
	it('matches the RFC example', () => {
		const input = JSON.parse(
			'{"numbers": [333333333.33333329, 1E30, 4.50, 2e-3, 0.000000000000000000000000001], "string": "\\u20ac$\\u000F\\u000aA\'\\u0042\\u0022\\u005c\\\\\\"\\/", "literals": [null, true, false]}'
		);
		expect(canonicalJson(input)).toBe(
			'{"literals":[null,true,false],"numbers":[333333333.3333333,1e+30,4.5,0.002,1e-27],"string":"€$\\u000f\\nA\'B\\"\\\\\\\\\\"/"}'
		);
	});
});

describe('template hash: SHA-256 of the RFC 8785 canonical content', () => {
	it('is the SHA-256 of the canonical JSON, as node:crypto computes it', () => {
		const expected = createHash('sha256').update(canonicalize(templateContent(demoTemplate)) as string, 'utf8').digest('hex');
		expect(hashTemplate(demoTemplate)).toBe(expected);
		expect(hashTemplate(demoTemplate)).toMatch(/^[0-9a-f]{64}$/);
	});

	it('does not depend on the order of keys', () => {
		const reordered = reverseKeys(demoTemplateInput);
		expect(JSON.stringify(reordered)).not.toBe(JSON.stringify(demoTemplateInput));
		expect(hashTemplate(parse(reordered))).toBe(hashTemplate(demoTemplate));
	});

	it('does not depend on defaults being written out or left to the schema', () => {
		// demoTemplateInput leaves required, critical, relative ... to their defaults; demoTemplate has them written out.
		expect(hashTemplate(parse(JSON.parse(JSON.stringify(demoTemplate))))).toBe(hashTemplate(parse(demoTemplateInput)));
	});

	it('changes with the content, not with the lifecycle status', () => {
		const base = hashTemplate(demoTemplate);
		const changed = structuredClone(demoTemplate);
		changed.header.theoreticalYield.minPercent = 89.9;
		expect(hashTemplate(changed)).not.toBe(base);
		const retired = structuredClone(demoTemplate);
		retired.header.status = 'retired';
		expect(hashTemplate(retired)).toBe(base);
	});
});

describe('export and import', () => {
	it('round-trips to the same template and hash', () => {
		const text = exportTemplate(demoTemplate);
		const r = importTemplate(text);
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(r.hash).toBe(hashTemplate(demoTemplate));
		expect(r.template).toEqual(demoTemplate);
		// and again: export of the import is byte-identical
		expect(exportTemplate(r.template)).toBe(text);
	});

	it('refuses a file whose content was changed after export', () => {
		const doc = JSON.parse(exportTemplate(demoTemplate));
		doc.template.sections[0].steps[0].fields[3].limits.tolerance = 5; // sucrose ± 5 % instead of 0.5 %
		const r = importTemplate(JSON.stringify(doc));
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.issues.map((i) => i.code)).toEqual(['import.hash-mismatch']);
	});

	it('refuses files that are not exports, naming why', () => {
		const code = (text: string) => {
			const r = importTemplate(text);
			return r.ok ? 'ok' : r.issues.map((i) => i.code);
		};
		expect(code('{ not json')).toEqual(['import.not-json']);
		expect(code(JSON.stringify({ format: 'something-else', formatVersion: 1 }))).toEqual(['import.format']);
		expect(code(JSON.stringify(demoTemplate))).toEqual(['import.format']);
	});

	it('reports the issues of an invalid template inside the file with their paths', () => {
		const doc = JSON.parse(exportTemplate(demoTemplate));
		doc.template.sections[0].steps[0].fields[0].formula = 'batch_size * 50 mg/mL + 1 mL';
		const r = importTemplate(JSON.stringify(doc));
		expect(r.ok).toBe(false);
		if (!r.ok) {
			expect(r.issues.map((i) => [i.path.join('.'), i.code])).toEqual([['template.sections.0.steps.0.fields.0.formula', 'formula.unit-mismatch']]);
		}
	});
});
