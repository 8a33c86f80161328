/**
 * Reads the machine output of a real test run: Vitest's `json` reporter
 * (test-results/vitest.json, written by scripts/test.js) and Playwright's `json` reporter
 * (test-results/e2e.json, playwright.config.ts). Pure: parsed JSON in, outcomes out.
 * Anything not shaped like those reports is refused with the reason, never guessed at.
 */

export type Runner = 'vitest' | 'playwright';
export type Outcome = 'passed' | 'failed' | 'skipped';

export interface TestOutcome {
	runner: Runner;
	/** Repository-relative, e.g. `tests/unit/foundation/time.test.ts`. */
	file: string;
	/** Describe blocks and title joined by a space (how both runners print a full name). */
	fullName: string;
	title: string;
	outcome: Outcome;
	/** The runner's own word for the result (failed, skipped, todo, flaky …). */
	status: string;
	/** First line of the first failure message, if any. */
	message: string | null;
}

export interface RunSummary {
	runner: Runner;
	/** Start of the run, ISO 8601 UTC. */
	startedAt: string | null;
	passed: number;
	failed: number;
	skipped: number;
	/** Errors outside any test (a file that failed to load, a web server that did not start). */
	errors: string[];
	tests: TestOutcome[];
}

export class RunFormatError extends Error {}

type Json = Record<string, unknown>;

function isObject(v: unknown): v is Json {
	return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function firstLine(text: unknown): string | null {
	if (typeof text !== 'string' || !text.trim()) return null;
	// eslint-disable-next-line no-control-regex
	return text.replace(/\u001b\[[0-9;]*m/g, '').trim().split('\n')[0].slice(0, 300);
}

/** A runner's absolute path, made relative to the repository (or to its `tests/` folder). */
export function relativePath(path: string, root: string): string {
	const p = path.replace(/\\/g, '/');
	const r = root.replace(/\\/g, '/').replace(/\/+$/, '');
	if (r && p.startsWith(`${r}/`)) return p.slice(r.length + 1);
	if (p.startsWith('tests/')) return p;
	const at = p.indexOf('/tests/');
	return at >= 0 ? p.slice(at + 1) : p;
}

function outcomeOf(status: string): Outcome {
	if (status === 'passed') return 'passed';
	if (status === 'failed') return 'failed';
	return 'skipped';
}

export function readVitestRun(report: unknown, root: string): RunSummary {
	if (!isObject(report) || !Array.isArray(report.testResults)) {
		throw new RunFormatError('not a Vitest json report: no "testResults" array');
	}
	const tests: TestOutcome[] = [];
	const errors: string[] = [];
	for (const file of report.testResults) {
		if (!isObject(file) || typeof file.name !== 'string' || !Array.isArray(file.assertionResults)) {
			throw new RunFormatError('not a Vitest json report: a test file without "name" and "assertionResults"');
		}
		const path = relativePath(file.name, root);
		if (file.status === 'failed' && file.assertionResults.length === 0) {
			errors.push(`${path}: ${firstLine(file.message) ?? 'the file failed before any test ran'}`);
		}
		for (const a of file.assertionResults) {
			if (!isObject(a) || typeof a.title !== 'string' || typeof a.status !== 'string') {
				throw new RunFormatError(`not a Vitest json report: a test in ${path} without "title" and "status"`);
			}
			const ancestors = Array.isArray(a.ancestorTitles) ? a.ancestorTitles.filter((t): t is string => typeof t === 'string') : [];
			const failures = Array.isArray(a.failureMessages) ? a.failureMessages : [];
			tests.push({
				runner: 'vitest',
				file: path,
				title: a.title,
				fullName: typeof a.fullName === 'string' ? a.fullName : [...ancestors, a.title].join(' '),
				outcome: outcomeOf(a.status),
				status: a.status,
				message: firstLine(failures[0])
			});
		}
	}
	const start = typeof report.startTime === 'number' ? new Date(report.startTime).toISOString() : null;
	return { runner: 'vitest', startedAt: start, ...count(tests), errors, tests };
}

function count(tests: TestOutcome[]) {
	return {
		passed: tests.filter((t) => t.outcome === 'passed').length,
		failed: tests.filter((t) => t.outcome === 'failed').length,
		skipped: tests.filter((t) => t.outcome === 'skipped').length
	};
}

interface PwWalk {
	root: string;
	testDir: string;
	tests: TestOutcome[];
}

function walkSuite(suite: Json, parents: string[], w: PwWalk): void {
	// The top suite of each file is titled with the file name; it is not part of a test's name.
	const isFileSuite = parents.length === 0 && typeof suite.file === 'string' && suite.title === suite.file;
	const names = isFileSuite || typeof suite.title !== 'string' || !suite.title ? parents : [...parents, suite.title];
	for (const spec of Array.isArray(suite.specs) ? suite.specs : []) {
		if (!isObject(spec) || typeof spec.title !== 'string') throw new RunFormatError('not a Playwright json report: a spec without "title"');
		const file = typeof spec.file === 'string' ? spec.file : typeof suite.file === 'string' ? suite.file : '';
		const path = relativePath(file.startsWith('/') ? file : `${w.testDir}/${file}`, w.root);
		const runs = Array.isArray(spec.tests) ? spec.tests.filter(isObject) : [];
		// One entry per project; a spec passes only when every project ran it and got the
		// expected pass (a test marked to fail, or flaky, proves nothing for the matrix).
		let status = runs.length ? 'expected' : 'not run';
		let message: string | null = null;
		for (const t of runs) {
			const s = typeof t.status === 'string' ? t.status : 'unknown';
			if (t.expectedStatus !== undefined && t.expectedStatus !== 'passed') status = 'expected to fail';
			else if (s !== 'expected') status = s;
			const results = Array.isArray(t.results) ? t.results.filter(isObject) : [];
			for (const r of results) {
				const errs = Array.isArray(r.errors) ? r.errors.filter(isObject) : [];
				message ??= firstLine(errs[0]?.message) ?? (isObject(r.error) ? firstLine(r.error.message) : null);
			}
		}
		const outcome: Outcome = status === 'expected' ? 'passed' : status === 'unexpected' || status === 'flaky' ? 'failed' : 'skipped';
		w.tests.push({
			runner: 'playwright',
			file: path,
			title: spec.title,
			fullName: [...names, spec.title].join(' '),
			outcome,
			status: status === 'expected' ? 'passed' : status,
			message: outcome === 'passed' ? null : message
		});
	}
	for (const child of Array.isArray(suite.suites) ? suite.suites : []) {
		if (isObject(child)) walkSuite(child, names, w);
	}
}

export function readPlaywrightRun(report: unknown, root: string): RunSummary {
	if (!isObject(report) || !Array.isArray(report.suites)) {
		throw new RunFormatError('not a Playwright json report: no "suites" array');
	}
	const config = isObject(report.config) ? report.config : {};
	const testDir = typeof config.rootDir === 'string' ? config.rootDir : `${root}/tests/e2e`;
	const w: PwWalk = { root, testDir, tests: [] };
	for (const s of report.suites) if (isObject(s)) walkSuite(s, [], w);
	const errors = (Array.isArray(report.errors) ? report.errors : []).map((e) => (isObject(e) ? firstLine(e.message) : firstLine(e)) ?? 'an error outside any test');
	const stats = isObject(report.stats) ? report.stats : {};
	return { runner: 'playwright', startedAt: typeof stats.startTime === 'string' ? stats.startTime : null, ...count(w.tests), errors, tests: w.tests };
}
