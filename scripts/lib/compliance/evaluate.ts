/**
 * Holds the traceability matrix against a real test run: each `file › title` the matrix names
 * must be a test of that run, and every test it matches must have passed. Pure, so the rules
 * that decide whether the validation summary may call a clause proven are unit-tested.
 */
import { CLAUSE_SECTION, checkMatrix, type MatrixRow, type Requirement, type TestRef } from './matrix';
import type { Runner, RunSummary, TestOutcome } from './runs';

export type RefVerdict = 'passed' | 'failed' | 'missing' | 'no-run';

export interface RefResult {
	ref: TestRef;
	runner: Runner;
	verdict: RefVerdict;
	/** Every test of the run the reference matches (a test run per database matches twice). */
	matches: TestOutcome[];
}

export type RowVerdict = 'proven' | 'proven + site procedure' | 'site procedure' | 'not applicable' | 'failed' | 'empty';

export interface RowResult {
	row: MatrixRow;
	verdict: RowVerdict;
	refs: RefResult[];
}

export type RequirementVerdict = 'proven' | 'site procedure' | 'failed' | 'planned' | 'withdrawn' | 'untraced';

export interface RequirementResult {
	requirement: Requirement;
	verdict: RequirementVerdict;
	/** The rows whose tests prove it: its detail rows, or the clause rows when it has none. */
	rows: RowResult[];
	/** The clauses (clause table) that name it. */
	clauses: string[];
}

export interface Evaluation {
	clauses: RowResult[];
	details: RowResult[];
	requirements: RequirementResult[];
	/** Each distinct reference once. */
	refs: RefResult[];
	/** Why the summary cannot say "valid"; empty when everything holds. */
	problems: string[];
}

/** Which runner a referenced file belongs to (playwright.config.ts: tests/e2e/**\/*.e2e.ts). */
export function runnerOf(file: string): Runner {
	return file.startsWith('tests/e2e/') || file.endsWith('.e2e.ts') ? 'playwright' : 'vitest';
}

/**
 * The matrix quotes a title, or a unique part of it, as it is written in the source. A
 * parameterised title (`it.each`) is written with its placeholders (%s, %d, %i, %f, %j, %o,
 * %#, $name); in the run they are filled in, so each placeholder matches any text.
 */
export function titlePattern(title: string): RegExp {
	const parts = title.split(/(%[sdifjoO#]|\$[A-Za-z_][\w.]*)/);
	const body = parts.map((p, i) => (i % 2 === 1 ? '.+?' : p.replace(/[.*+?^${}()|[\]\\]/g, '\\$&'))).join('');
	return new RegExp(body);
}

export function matchRef(ref: TestRef, run: RunSummary | null): RefResult {
	const runner = runnerOf(ref.file);
	if (!run) return { ref, runner, verdict: 'no-run', matches: [] };
	const pattern = titlePattern(ref.title);
	const matches = run.tests.filter((t) => t.file === ref.file && pattern.test(t.fullName));
	const verdict: RefVerdict = matches.length === 0 ? 'missing' : matches.every((t) => t.outcome === 'passed') ? 'passed' : 'failed';
	return { ref, runner, verdict, matches };
}

function verdictOf(row: MatrixRow, refs: RefResult[]): RowVerdict {
	if (refs.some((r) => r.verdict !== 'passed')) return 'failed';
	if (refs.length > 0) return row.siteProcedure ? 'proven + site procedure' : 'proven';
	if (row.siteProcedure) return 'site procedure';
	if (row.notApplicable) return 'not applicable';
	return 'empty';
}

export function describeRef(r: RefResult): string {
	const name = `${r.ref.file} › ${r.ref.title}`;
	const report = r.runner === 'vitest' ? 'the Vitest run' : 'the Playwright run';
	switch (r.verdict) {
		case 'passed':
			return `${name}: passed`;
		case 'no-run':
			return `${name}: there is no ${r.runner === 'vitest' ? 'Vitest' : 'Playwright'} run to prove it`;
		case 'missing':
			return `${name}: no such test in ${report}`;
		case 'failed': {
			const bad = r.matches.filter((m) => m.outcome !== 'passed');
			return `${name}: ${bad.map((m) => `${m.status}${m.message ? ` (${m.message})` : ''} in "${m.fullName}"`).join('; ')}`;
		}
	}
}

export interface Runs {
	vitest: RunSummary | null;
	playwright: RunSummary | null;
}

export function evaluate(rows: MatrixRow[], requirements: Requirement[], clauses: readonly string[], runs: Runs): Evaluation {
	const cache = new Map<string, RefResult>();
	const resolve = (ref: TestRef) => {
		const key = `${ref.file}\u0000${ref.title}`;
		let hit = cache.get(key);
		if (!hit) {
			hit = matchRef(ref, runnerOf(ref.file) === 'vitest' ? runs.vitest : runs.playwright);
			cache.set(key, hit);
		}
		return hit;
	};
	const results = rows.map((row): RowResult => {
		const refs = row.refs.map(resolve);
		return { row, refs, verdict: verdictOf(row, refs) };
	});

	const reqResults = requirements.map((requirement): RequirementResult => {
		const naming = results.filter((r) => r.row.requirements.includes(requirement.id));
		// A clause row names a requirement among several and its tests may prove another one:
		// the detail rows ("Requirements to tests") are the requirement's own evidence.
		const detail = naming.filter((r) => r.row.section !== CLAUSE_SECTION);
		const mine = detail.length ? detail : naming;
		const clauses = naming.filter((r) => r.row.section === CLAUSE_SECTION).map((r) => r.row.clause);
		let verdict: RequirementVerdict;
		// Planned stays planned until requirements.md drops the mark, whatever rows exist.
		if (requirement.withdrawn) verdict = 'withdrawn';
		else if (requirement.planned) verdict = 'planned';
		else if (mine.length === 0) verdict = 'untraced';
		else if (mine.some((r) => r.verdict === 'failed' || r.verdict === 'empty')) verdict = 'failed';
		else if (mine.some((r) => r.verdict === 'proven' || r.verdict === 'proven + site procedure')) verdict = 'proven';
		else verdict = 'site procedure';
		return { requirement, verdict, rows: mine, clauses };
	});

	const problems: string[] = [];
	if (!runs.vitest) problems.push('there is no Vitest run (test-results/vitest.json): run `npm test` first');
	for (const run of [runs.vitest, runs.playwright]) {
		for (const e of run?.errors ?? []) problems.push(`${run!.runner === 'vitest' ? 'Vitest' : 'Playwright'} run error: ${e}`);
	}
	for (const p of checkMatrix(rows, requirements, clauses)) problems.push(p.line ? `traceability.md line ${p.line}: ${p.message}` : p.message);
	const refs = [...cache.values()].sort((a, b) => (a.ref.file === b.ref.file ? (a.ref.title < b.ref.title ? -1 : 1) : a.ref.file < b.ref.file ? -1 : 1));
	for (const r of refs) if (r.verdict !== 'passed') problems.push(describeRef(r));

	return {
		clauses: results.filter((r) => r.row.section === CLAUSE_SECTION),
		details: results.filter((r) => r.row.section !== CLAUSE_SECTION),
		requirements: reqResults,
		refs,
		problems
	};
}

export interface Totals {
	clauses: Record<RowVerdict, number> & { total: number };
	requirements: Record<RequirementVerdict, number> & { total: number };
	refs: Record<RefVerdict, number> & { total: number };
}

export function totalsOf(e: Evaluation): Totals {
	const rows = { proven: 0, 'proven + site procedure': 0, 'site procedure': 0, 'not applicable': 0, failed: 0, empty: 0, total: e.clauses.length };
	for (const c of e.clauses) rows[c.verdict]++;
	const reqs = { proven: 0, 'site procedure': 0, failed: 0, planned: 0, withdrawn: 0, untraced: 0, total: e.requirements.length };
	for (const r of e.requirements) reqs[r.verdict]++;
	const refs = { passed: 0, failed: 0, missing: 0, 'no-run': 0, total: e.refs.length };
	for (const r of e.refs) refs[r.verdict]++;
	return { clauses: rows, requirements: reqs, refs };
}
