import { existsSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { REQUIRED_CLAUSES } from '../../../scripts/lib/compliance/clauses';
import { CLAUSE_SECTION, checkMatrix, parseMatrix, parseRefs, parseRequirements, type TestRef } from '../../../scripts/lib/compliance/matrix';

// The compliance pack must point at tests that exist and leave no clause out (21 CFR 11.10(k):
// controlled system documentation; a matrix pointing at nothing would prove nothing). The same
// parser feeds `npm run compliance:report`, which then checks each test passed in a real run.
const matrix = readFileSync('compliance/traceability.md', 'utf8');
const rows = parseMatrix(matrix);
const requirements = parseRequirements(readFileSync('compliance/requirements.md', 'utf8'));
const references = [...new Map(rows.flatMap((r) => r.refs).map((r) => [`${r.file} › ${r.title}`, r])).values()];
const risks = parseRefs(readFileSync('compliance/risk-assessment.md', 'utf8'));

function missing(ref: TestRef): string | null {
	if (!existsSync(ref.file)) return `${ref.file} does not exist`;
	// The title as written in the test's source (a unique part of it is enough).
	return readFileSync(ref.file, 'utf8').includes(ref.title) ? null : `no test titled "${ref.title}" in ${ref.file}`;
}

describe('compliance traceability matrix', () => {
	it('names tests', () => {
		// Every backticked reference anywhere in the file is parsed as a table cell reference.
		expect(references.length).toBe(new Set([...matrix.matchAll(/`(tests\/[^`›]+?)\s*›\s*([^`]+)`/g)].map((m) => `${m[1].trim()} › ${m[2].trim()}`)).size);
		expect(references.length).toBeGreaterThan(100);
	});

	it.each(references.map((r) => [`${r.file} › ${r.title}`, r] as const))('%s exists', (_, ref) => {
		const why = missing(ref);
		expect(why, why ?? '').toBeNull();
	});

	it('every clause has a row', () => {
		const listed = new Set(rows.filter((r) => r.section === CLAUSE_SECTION).map((r) => r.clause));
		// Part 11 (30 clauses and sub-clauses), Annex 11 (23) and 211.186/188/192 (5): scripts/lib/compliance/clauses.ts
		expect(REQUIRED_CLAUSES).toHaveLength(58);
		expect(REQUIRED_CLAUSES.filter((c) => !listed.has(c))).toEqual([]);
	});

	it('every row names a test, a site procedure or why it does not apply, and only requirements that exist', () => {
		expect(checkMatrix(rows, requirements, REQUIRED_CLAUSES).filter((p) => p.line !== null).map((p) => `line ${p.line}: ${p.message}`)).toEqual([]);
	});

	it('every requirement is traced or planned', () => {
		expect(checkMatrix(rows, requirements, []).filter((p) => p.line === null).map((p) => p.message)).toEqual([]);
		expect(requirements.length).toBeGreaterThan(60);
	});

	it('every test the risk assessment names exists', () => {
		expect(risks.length).toBeGreaterThan(20);
		expect(risks.map(missing).filter(Boolean)).toEqual([]);
	});
});
