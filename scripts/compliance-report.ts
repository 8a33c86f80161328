/**
 * `npm run compliance:report [-- --vitest=FILE] [--e2e=FILE] [--out=DIR]`: builds the
 * validation summary (HTML and PDF) from the last real test run — test-results/vitest.json and
 * test-results/e2e.json, which `npm test` writes — and the compliance pack in compliance/.
 *
 * Exit codes: 0 when every clause is covered and every test the matrix names ran and passed;
 * 1 when the report was built but something is not proven (each problem is printed); 2 when
 * there is no test run or a file cannot be read, so no report could be built.
 */
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { REQUIRED_CLAUSES } from './lib/compliance/clauses';
import { evaluate, totalsOf } from './lib/compliance/evaluate';
import { renderHtml } from './lib/compliance/html';
import { parseMatrix, parseRequirements } from './lib/compliance/matrix';
import { renderPdf } from './lib/compliance/pdf';
import { readPlaywrightRun, readVitestRun, type RunSummary } from './lib/compliance/runs';
import { checkRunIdentity, readRunIdentity, type ReportMeta, type RunIdentity } from './lib/compliance/summary';

const root = resolve(new URL('..', import.meta.url).pathname);
const arg = (name: string, fallback: string) => {
	const hit = process.argv.slice(2).find((a) => a.startsWith(`--${name}=`));
	return resolve(root, hit ? hit.slice(name.length + 3) : fallback);
};
const vitestFile = arg('vitest', 'test-results/vitest.json');
const e2eFile = arg('e2e', 'test-results/e2e.json');
const outDir = arg('out', 'compliance/report');

function stop(message: string): never {
	console.error(`compliance:report: ${message}`);
	process.exit(2);
}

function readRun(file: string, read: (json: unknown, root: string) => RunSummary): RunSummary | null {
	if (!existsSync(file)) return null;
	try {
		return read(JSON.parse(readFileSync(file, 'utf8')), root);
	} catch (err) {
		stop(`${file} is not a readable test report: ${err instanceof Error ? err.message : err}. Run \`npm test\` again to write it.`);
	}
}

function git(args: string[]): string | null {
	try {
		return execFileSync('git', args, { cwd: root, encoding: 'utf8', stdio: ['ignore', 'pipe', 'ignore'] }).trim();
	} catch {
		return null;
	}
}

const vitest = readRun(vitestFile, readVitestRun);
if (!vitest) stop(`there is no test run: ${vitestFile} does not exist. Run \`npm test\` (it writes test-results/vitest.json and test-results/e2e.json), then this again.`);
const playwright = readRun(e2eFile, readPlaywrightRun);

const read = (file: string) => {
	try {
		return readFileSync(join(root, file), 'utf8');
	} catch {
		stop(`cannot read ${file}`);
	}
};
const requirements = parseRequirements(read('compliance/requirements.md'));
const rows = parseMatrix(read('compliance/traceability.md'));
const result = evaluate(rows, requirements, REQUIRED_CLAUSES, { vitest, playwright });

const pkg = JSON.parse(read('package.json')) as { version?: string };
const identityFile = join(root, 'test-results/run.json');
let tested: RunIdentity | null = null;
try {
	tested = existsSync(identityFile) ? readRunIdentity(JSON.parse(readFileSync(identityFile, 'utf8'))) : null;
} catch {
	stop(`${identityFile} is not readable JSON. Run \`npm test\` again to write it.`);
}
const meta: ReportMeta = {
	version: pkg.version ?? 'unknown',
	commit: git(['rev-parse', 'HEAD']) ?? 'unknown (not a git checkout)',
	dirty: (git(['status', '--porcelain']) ?? '') !== '',
	tested,
	generatedAt: new Date().toISOString(),
	vitest,
	playwright,
	vitestSource: vitestFile.replace(`${root}/`, ''),
	playwrightSource: e2eFile.replace(`${root}/`, '')
};

const identityProblem = checkRunIdentity(meta.tested, meta.commit, meta.dirty);
if (identityProblem) result.problems.unshift(identityProblem);

const fontDir = join(root, 'node_modules/@expo-google-fonts/noto-sans');
const pdf = await renderPdf(result, meta, {
	regular: readFileSync(join(fontDir, '400Regular/NotoSans_400Regular.ttf')),
	bold: readFileSync(join(fontDir, '700Bold/NotoSans_700Bold.ttf'))
});
mkdirSync(outDir, { recursive: true });
writeFileSync(join(outDir, 'validation-summary.html'), renderHtml(result, meta));
writeFileSync(join(outDir, 'validation-summary.pdf'), pdf);

const t = totalsOf(result);
console.log(`Rimebook ${meta.version} at ${meta.commit}${meta.dirty ? ' (uncommitted changes)' : ''}`);
console.log(`clauses: ${t.clauses.total} (${t.clauses.proven + t.clauses['proven + site procedure']} proven by tests, ${t.clauses['site procedure']} site procedure, ${t.clauses['not applicable']} not applicable, ${t.clauses.failed + t.clauses.empty} failed)`);
console.log(`requirements: ${t.requirements.total} (${t.requirements.proven} proven, ${t.requirements['site procedure']} site procedure, ${t.requirements.planned} planned, ${t.requirements.failed} failed, ${t.requirements.untraced} not traced)`);
console.log(`tests named: ${t.refs.total} (${t.refs.passed} passed, ${t.refs.failed} failed, ${t.refs.missing} not in the run, ${t.refs['no-run']} without a run)`);
console.log(`wrote ${join(outDir, 'validation-summary.html').replace(`${root}/`, '')} and ${join(outDir, 'validation-summary.pdf').replace(`${root}/`, '')}`);
if (result.problems.length) {
	console.error(`\nNOT VALID: ${result.problems.length} problem${result.problems.length === 1 ? '' : 's'}:`);
	for (const p of result.problems) console.error(`  - ${p}`);
	process.exitCode = 1;
} else console.log('\nVALID: every clause is covered and every test the matrix names passed in this run.');
