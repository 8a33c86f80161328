import { existsSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';

// The traceability matrix must name tests that exist (21 CFR 11.10(k): controlled system
// documentation; a matrix pointing at nothing would prove nothing).
const matrix = readFileSync('compliance/traceability.md', 'utf8');
const references = [...matrix.matchAll(/`(tests\/[^`›]+?)\s*›\s*([^`]+)`/g)].map((m) => ({ file: m[1].trim(), title: m[2].trim() }));

describe('compliance traceability matrix', () => {
	it('names tests', () => {
		expect(references.length).toBeGreaterThan(10);
	});

	it.each(references.map((r) => [`${r.file} › ${r.title}`, r] as const))('%s exists', (_, ref) => {
		expect(existsSync(ref.file), `${ref.file} does not exist`).toBe(true);
		const source = readFileSync(ref.file, 'utf8');
		// The title as written in the test's source (a unique part of it is enough).
		expect(source.includes(ref.title), `no test titled "${ref.title}" in ${ref.file}`).toBe(true);
	});
});
