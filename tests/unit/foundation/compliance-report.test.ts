import { readFileSync } from 'node:fs';
import { PDFDocument } from 'pdf-lib';
import { describe, expect, it } from 'vitest';
import { evaluate, matchRef, titlePattern } from '../../../scripts/lib/compliance/evaluate';
import { renderHtml } from '../../../scripts/lib/compliance/html';
import { checkMatrix, parseMatrix, parseRequirements, splitRow } from '../../../scripts/lib/compliance/matrix';
import { renderPdf } from '../../../scripts/lib/compliance/pdf';
import { readPlaywrightRun, readVitestRun, RunFormatError } from '../../../scripts/lib/compliance/runs';
import { checkRunIdentity, readRunIdentity, type ReportMeta } from '../../../scripts/lib/compliance/summary';

// The fixtures are cut from real reporter output of this repository's own runs (Vitest 4.1.12
// `--reporter=json`, Playwright 1.65.1 `json` reporter), with the checkout moved to /srv/rimebook
// and, on purpose, one integration test failed (on PostgreSQL only), one unit test skipped and
// one end-to-end test failed inside a describe block.
const ROOT = '/srv/rimebook';
const vitestJson: unknown = JSON.parse(readFileSync('tests/unit/foundation/fixtures/compliance-vitest-run.json', 'utf8'));
const e2eJson: unknown = JSON.parse(readFileSync('tests/unit/foundation/fixtures/compliance-e2e-run.json', 'utf8'));
const vitest = readVitestRun(vitestJson, ROOT);
const playwright = readPlaywrightRun(e2eJson, ROOT);

const REQUIREMENTS = `
## Foundation (URS-F)

| ID | requirement |
| --- | --- |
| URS-F-01 | Times are stored in UTC. |
| URS-F-02 | The trail cannot be changed. |
| URS-F-03 | A report of backups. *planned* (issue 9) |
| URS-F-04 | A fax gateway. *withdrawn* |
`;

const MATRIX = `
## Clauses

| clause | the regulation asks | how Rimebook meets it | requirements | evidence |
| --- | --- | --- | --- | --- |
| 21 CFR 11.10(e) | audit trail | triggers | URS-F-02 | \`tests/integration/audit/ledger.test.ts › rejects UPDATE, DELETE and TRUNCATE on %s in the database itself\` |
| 21 CFR 11.10(i) | training | the site trains | — | site procedure: train every user before their account is enabled |
| 21 CFR 11.200(b) | biometrics | none | — | not applicable: no signature is based on biometrics |
| 21 CFR 11.50(a)(2) | date and time | UTC with zone | URS-F-01 | \`tests/unit/foundation/time.test.ts › shows an instant with the zone\`; site procedure: keep the server clock synchronised |

## Requirements to tests

| clause | requirement | how Rimebook meets it | tests |
| --- | --- | --- | --- |
| 11.10(e) | URS-F-02 | a pipe \\| in a cell, and \`a|b\` in code | \`tests/integration/audit/ledger.test.ts › rolls back a unit of work\` |
`;

const CLAUSES = ['21 CFR 11.10(e)', '21 CFR 11.10(i)', '21 CFR 11.200(b)', '21 CFR 11.50(a)(2)'];

describe('reading the compliance pack', () => {
	it('splits table rows on |, but not inside code or when escaped', () => {
		expect(splitRow('| a | `x | y` | b \\| c |')).toEqual(['a', '`x | y`', 'b | c']);
	});

	it('reads clause rows with their tests, site procedure and reasons, and the detail rows', () => {
		const rows = parseMatrix(MATRIX);
		expect(rows.map((r) => [r.section, r.clause])).toEqual([
			['Clauses', '21 CFR 11.10(e)'],
			['Clauses', '21 CFR 11.10(i)'],
			['Clauses', '21 CFR 11.200(b)'],
			['Clauses', '21 CFR 11.50(a)(2)'],
			['Requirements to tests', '11.10(e)']
		]);
		expect(rows[0].refs).toEqual([{ file: 'tests/integration/audit/ledger.test.ts', title: 'rejects UPDATE, DELETE and TRUNCATE on %s in the database itself' }]);
		expect(rows[1].siteProcedure).toBe('train every user before their account is enabled');
		expect(rows[2].notApplicable).toBe('no signature is based on biometrics');
		expect(rows[3].refs).toHaveLength(1);
		expect(rows[3].siteProcedure).toBe('keep the server clock synchronised');
		expect(rows[4].how).toBe('a pipe | in a cell, and `a|b` in code');
		expect(rows[4].requirements).toEqual(['URS-F-02']);
		// line numbers point into the Markdown (1-based), for messages a person can act on
		expect(MATRIX.split('\n')[rows[0].line - 1]).toContain('21 CFR 11.10(e)');
	});

	it('reads requirements and which are planned or withdrawn', () => {
		expect(parseRequirements(REQUIREMENTS).map((r) => [r.id, r.planned, r.withdrawn])).toEqual([
			['URS-F-01', false, false],
			['URS-F-02', false, false],
			['URS-F-03', true, false],
			['URS-F-04', false, true]
		]);
	});

	it('names a missing clause, a row without evidence, an unknown requirement and an untraced one', () => {
		const rows = parseMatrix(`${MATRIX}| 21 CFR 11.30 | URS-X-99 | open systems | nothing yet |\n`);
		const requirements = [...parseRequirements(REQUIREMENTS), { id: 'URS-F-05', text: 'x', section: 'F', planned: false, withdrawn: false }];
		const messages = checkMatrix(rows, requirements, [...CLAUSES, '21 CFR 11.300(a)']).map((p) => p.message);
		expect(messages).toEqual([
			'21 CFR 11.300(a) has no row in the clause table ("## Clauses" of traceability.md)',
			'21 CFR 11.30 names no test, no site procedure and no reason it does not apply',
			'21 CFR 11.30 names URS-X-99, which requirements.md does not define',
			'URS-F-05 is in requirements.md but no matrix row traces it (mark it *planned* if it is not built yet)'
		]);
		expect(checkMatrix(parseMatrix(MATRIX), parseRequirements(REQUIREMENTS), CLAUSES)).toEqual([]);
	});
});

describe('reading a real test run', () => {
	it('reads a Vitest json report: relative paths, full names, and the counts the reporter itself gives', () => {
		const raw = vitestJson as { numPassedTests: number; numFailedTests: number; numPendingTests: number };
		expect([vitest.passed, vitest.failed, vitest.skipped]).toEqual([raw.numPassedTests, raw.numFailedTests, raw.numPendingTests]);
		expect(new Set(vitest.tests.map((t) => t.file))).toEqual(new Set(['tests/unit/foundation/time.test.ts', 'tests/integration/audit/ledger.test.ts', 'tests/unit/foundation/skipped.test.ts']));
		const failed = vitest.tests.find((t) => t.outcome === 'failed')!;
		expect(failed.fullName.startsWith('the ledger on postgresql rolls back')).toBe(true);
		expect(failed.message).toBe('AssertionError: expected 1 to be +0 // Object.is equality');
		expect(vitest.startedAt).toBe(new Date((vitestJson as { startTime: number }).startTime).toISOString());
	});

	it('reads a Playwright json report, describe blocks included, against its own stats', () => {
		expect([playwright.passed, playwright.failed]).toEqual([2, 1]); // the fixture's stats: expected 2, unexpected 1
		expect(playwright.tests.map((t) => [t.file, t.fullName, t.outcome])).toEqual([
			['tests/e2e/audit.e2e.ts', 'the inspector reads and filters the audit trail, then exports a copy that verifies offline', 'passed'],
			['tests/e2e/audit.e2e.ts', 'the inspector verifies the chain on the integrity page', 'passed'],
			['tests/e2e/audit.e2e.ts', 'read-only roles the inspector cannot change anything', 'failed']
		]);
		expect(playwright.tests[2].message).toBe('Error: expect(locator).toBeVisible() failed');
	});

	it('refuses a file that is not a report, saying so', () => {
		expect(() => readVitestRun({ suites: [] }, ROOT)).toThrow(RunFormatError);
		expect(() => readVitestRun([], ROOT)).toThrow('no "testResults" array');
		expect(() => readPlaywrightRun({ testResults: [] }, ROOT)).toThrow('no "suites" array');
	});
});

describe('holding the matrix against the run', () => {
	it('lets a placeholder of it.each stand for the filled-in text, and nothing else be loose', () => {
		const p = titlePattern('rejects %s on $table (a.b)');
		expect(p.test('x rejects UPDATE on audit_event (a.b) y')).toBe(true);
		expect(p.test('rejects UPDATE on audit_event (aXb)')).toBe(false);
		expect(p.test('rejects  on audit_event (a.b)')).toBe(false);
	});

	it('passes a test only when every run of it passed: on PGlite and on PostgreSQL', () => {
		const each = matchRef({ file: 'tests/integration/audit/ledger.test.ts', title: 'rejects UPDATE, DELETE and TRUNCATE on %s in the database itself' }, vitest);
		expect(each.verdict).toBe('passed');
		expect(each.matches).toHaveLength(8); // 4 tables × 2 databases
		const half = matchRef({ file: 'tests/integration/audit/ledger.test.ts', title: 'rolls back a unit of work' }, vitest);
		expect(half.verdict).toBe('failed');
		expect(half.matches.map((m) => m.outcome)).toEqual(['passed', 'failed']);
	});

	it('calls a test missing when its title or its file is not in the run, and a skipped test not passed', () => {
		expect(matchRef({ file: 'tests/unit/foundation/time.test.ts', title: 'a title nobody wrote' }, vitest).verdict).toBe('missing');
		expect(matchRef({ file: 'tests/unit/foundation/other.test.ts', title: 'shows an instant with the zone' }, vitest).verdict).toBe('missing');
		expect(matchRef({ file: 'tests/unit/foundation/skipped.test.ts', title: 'is skipped here' }, vitest).verdict).toBe('failed');
		expect(matchRef({ file: 'tests/e2e/audit.e2e.ts', title: 'verifies the chain' }, null).verdict).toBe('no-run');
	});

	it('is valid only when every clause is covered and every named test passed', () => {
		const good = MATRIX.replace(/\| 11\.10\(e\) \| URS-F-02 .*\n/, '| 11.10(e) | URS-F-02 | x | `tests/e2e/audit.e2e.ts › verifies the chain on the integrity page` |\n');
		const ok = evaluate(parseMatrix(good), parseRequirements(REQUIREMENTS), CLAUSES, { vitest, playwright });
		expect(ok.problems).toEqual([]);
		expect(ok.clauses.map((c) => c.verdict)).toEqual(['proven', 'site procedure', 'not applicable', 'proven + site procedure']);
		expect(ok.requirements.map((r) => r.verdict)).toEqual(['proven', 'proven', 'planned', 'withdrawn']);
	});

	it("a requirement's evidence is its own detail rows; without them the clause rows that name it", () => {
		const e = evaluate(parseMatrix(MATRIX), parseRequirements(REQUIREMENTS), CLAUSES, { vitest, playwright });
		const [f01, f02] = e.requirements;
		expect(f02.rows.map((r) => r.row.clause)).toEqual(['11.10(e)']);
		expect(f02.clauses).toEqual(['21 CFR 11.10(e)']);
		expect(f02.verdict).toBe('failed'); // its detail row names the test that failed on PostgreSQL
		expect(f01.rows.map((r) => r.row.clause)).toEqual(['21 CFR 11.50(a)(2)']);
		expect(f01.verdict).toBe('proven');
	});

	it('fails naming the failed test, the missing one and the absent end-to-end run, sorted by file', () => {
		const withE2e = `${MATRIX}| 11.10(d) | URS-F-01 | x | \`tests/e2e/audit.e2e.ts › the inspector cannot change anything\`; \`tests/unit/foundation/time.test.ts › no such title\` |\n`;
		const bad = evaluate(parseMatrix(withE2e), parseRequirements(REQUIREMENTS), CLAUSES, { vitest, playwright });
		expect(bad.problems).toEqual([
			'tests/e2e/audit.e2e.ts › the inspector cannot change anything: unexpected (Error: expect(locator).toBeVisible() failed) in "read-only roles the inspector cannot change anything"',
			'tests/integration/audit/ledger.test.ts › rolls back a unit of work: failed (AssertionError: expected 1 to be +0 // Object.is equality) in "the ledger on postgresql rolls back a unit of work that changes data without an audit event (runUnitOfWork, design.md "One write path")"',
			'tests/unit/foundation/time.test.ts › no such title: no such test in the Vitest run'
		]);
		expect(bad.requirements.map((r) => r.verdict)).toEqual(['failed', 'failed', 'planned', 'withdrawn']);
		const noE2e = evaluate(parseMatrix(withE2e), parseRequirements(REQUIREMENTS), CLAUSES, { vitest, playwright: null });
		expect(noE2e.problems).toContain('tests/e2e/audit.e2e.ts › the inspector cannot change anything: there is no Playwright run to prove it');
		const none = evaluate(parseMatrix(MATRIX), parseRequirements(REQUIREMENTS), CLAUSES, { vitest: null, playwright: null });
		expect(none.problems[0]).toBe('there is no Vitest run (test-results/vitest.json): run `npm test` first');
	});
});

describe('the validation summary', () => {
	const meta: ReportMeta = {
		version: '0.1.0',
		commit: '0123456789abcdef0123456789abcdef01234567',
		dirty: false,
		generatedAt: '2026-12-02T01:00:00.000Z',
		vitest,
		playwright,
		vitestSource: 'test-results/vitest.json',
		playwrightSource: 'test-results/e2e.json',
		tested: { commit: '0123456789abcdef0123456789abcdef01234567', dirty: false, startedAt: '2026-12-02T00:40:00.000Z' }
	};
	const hostile = `${MATRIX}| 11.10(d) | URS-F-01 | <script>alert(1)</script> → ≤ | \`tests/unit/foundation/time.test.ts › <img src=x onerror=alert(1)>\` |\n`;
	const result = evaluate(parseMatrix(hostile), parseRequirements(REQUIREMENTS), CLAUSES, { vitest, playwright });

	it('refuses a run of another commit or of uncommitted changes as evidence for this commit', () => {
		const tested = readRunIdentity({ commit: 'aaa', dirty: false, startedAt: '2026-12-02T00:40:00.000Z' });
		expect(checkRunIdentity(tested, 'aaa', false)).toBeNull();
		expect(checkRunIdentity(tested, 'bbb', false)).toBe('the test run was of commit aaa, but the working tree is at bbb: run `npm test` again');
		expect(checkRunIdentity(readRunIdentity({ commit: 'aaa', dirty: true }), 'aaa', false)).toContain('was made with uncommitted changes');
		expect(checkRunIdentity(tested, 'aaa', true)).toContain('the working tree now has uncommitted changes');
		// Without run.json nothing can be compared; the summary says the commit was not recorded.
		expect(checkRunIdentity(readRunIdentity('not an object'), 'aaa', true)).toBeNull();
	});

	it('HTML names version, commit, run date and verdicts, and escapes every text from the matrix', () => {
		const html = renderHtml(result, meta);
		expect(html).not.toContain('<script>');
		expect(html).not.toContain('<img');
		expect(html).toContain('&lt;script&gt;alert(1)&lt;/script&gt;');
		expect(html).toContain(meta.commit);
		expect(html).toContain('2026-12-02 01:00:00 UTC');
		expect(html).toContain('run started 2026-12-02 00:40:00 UTC');
		expect(html).toContain(`NOT VALID: ${result.problems.length} problems`);
		expect(html).toContain('NOT IN RUN');
	});

	it('PDF opens again with pdf-lib, titled with the version, even with characters Noto Sans lacks', async () => {
		const bytes = await renderPdf(result, meta, {
			regular: readFileSync('node_modules/@expo-google-fonts/noto-sans/400Regular/NotoSans_400Regular.ttf'),
			bold: readFileSync('node_modules/@expo-google-fonts/noto-sans/700Bold/NotoSans_700Bold.ttf')
		});
		const doc = await PDFDocument.load(bytes);
		expect(doc.getTitle()).toBe('Rimebook validation summary 0.1.0');
		expect(doc.getSubject()).toBe(`Commit ${meta.commit}`);
		expect(doc.getPageCount()).toBeGreaterThanOrEqual(1);
	});
});
