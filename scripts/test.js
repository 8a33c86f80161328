#!/usr/bin/env node
// `npm test`: every test — unit, integration on PGlite AND on a real PostgreSQL server, and
// end-to-end in Debian's Chromium against the built app. Missing tools are installed through apt
// when running as root; otherwise the run fails saying how to install them. Nothing is skipped.
import { spawnSync, execFileSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, readdirSync, rmSync, mkdirSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

const root = new URL('..', import.meta.url).pathname;
const isRoot = process.getuid?.() === 0;
const chromium = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';
const cleanups = [];

function run(cmd, args, options = {}) {
	console.log(`\n$ ${cmd} ${args.join(' ')}`);
	return spawnSync(cmd, args, { cwd: root, stdio: 'inherit', ...options }).status ?? 1;
}

function fail(message) {
	console.error(`\nnpm test cannot run: ${message}`);
	for (const c of cleanups.reverse()) c();
	process.exit(2);
}

function aptInstall(packages, why) {
	if (!isRoot) fail(`${why}\nInstall it with: sudo apt-get install -y ${packages.join(' ')}`);
	console.log(`[test] ${why} Installing ${packages.join(', ')} with apt…`);
	const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
	if (run('apt-get', ['update', '-qq'], { env }) !== 0 || run('apt-get', ['install', '-y', '-qq', ...packages], { env }) !== 0) {
		fail(`apt-get could not install ${packages.join(' ')}.`);
	}
}

function freePort() {
	return new Promise((resolve, reject) => {
		const srv = createServer();
		srv.listen(0, '127.0.0.1', () => {
			const { port } = srv.address();
			srv.close(() => resolve(port));
		});
		srv.on('error', reject);
	});
}

function postgresBin() {
	const base = '/usr/lib/postgresql';
	if (!existsSync(base)) return null;
	const versions = readdirSync(base).filter((v) => existsSync(join(base, v, 'bin', 'initdb'))).sort((a, b) => Number(b) - Number(a));
	return versions.length ? { version: versions[0], bin: join(base, versions[0], 'bin') } : null;
}

async function startThrowawayPostgres() {
	let pgInfo = postgresBin();
	if (!pgInfo) {
		aptInstall(['postgresql'], 'A PostgreSQL server is needed for the integration tests and none is installed.');
		pgInfo = postgresBin();
		if (!pgInfo) fail('PostgreSQL was installed but its binaries were not found under /usr/lib/postgresql.');
	}
	const port = await freePort();
	if (isRoot) {
		// initdb refuses to run as root; Debian's wrapper runs the cluster as the postgres user.
		const name = `rimebook_test_${process.pid}`;
		const created = run('pg_createcluster', [pgInfo.version, name, '-p', String(port), '--start', '--', '--auth-host=trust', '--auth-local=trust']);
		if (created !== 0) fail('pg_createcluster could not create a throw-away cluster.');
		cleanups.push(() => spawnSync('pg_dropcluster', [pgInfo.version, name, '--stop'], { stdio: 'ignore' }));
	} else {
		const dir = mkdtempSync(join(tmpdir(), 'rimebook-pg-'));
		execFileSync(join(pgInfo.bin, 'initdb'), ['-D', dir, '-U', 'postgres', '--auth=trust', '-E', 'UTF8'], { stdio: 'ignore' });
		const started = run(join(pgInfo.bin, 'pg_ctl'), ['-D', dir, '-l', join(dir, 'log'), '-w', '-o', `-p ${port} -k ${dir} -c listen_addresses=127.0.0.1`, 'start']);
		if (started !== 0) fail('pg_ctl could not start a throw-away PostgreSQL server.');
		cleanups.push(() => {
			spawnSync(join(pgInfo.bin, 'pg_ctl'), ['-D', dir, '-m', 'immediate', 'stop'], { stdio: 'ignore' });
			rmSync(dir, { recursive: true, force: true });
		});
	}
	return `postgres://postgres@127.0.0.1:${port}/postgres`;
}

function countVitest(file) {
	try {
		const r = JSON.parse(readFileSync(file, 'utf8'));
		return { passed: r.numPassedTests ?? 0, failed: (r.numFailedTests ?? 0) + (r.numPendingTests ?? 0) + (r.numTodoTests ?? 0) };
	} catch {
		return { passed: 0, failed: 1 };
	}
}

function countPlaywright(file) {
	try {
		const r = JSON.parse(readFileSync(file, 'utf8'));
		return { passed: r.stats?.expected ?? 0, failed: (r.stats?.unexpected ?? 0) + (r.stats?.flaky ?? 0) + (r.stats?.skipped ?? 0) };
	} catch {
		return { passed: 0, failed: 1 };
	}
}

// 1. Tools: Debian's Chromium for e2e, poppler and DejaVu for the PDF checks, a PostgreSQL server for integration.
if (!existsSync(chromium)) aptInstall(['chromium'], `Chromium is needed for the end-to-end tests and ${chromium} is missing.`);
// The PDF tests read the printed record back with poppler (pdftotext, pdfsig, pdfdetach, pdftoppm);
// the PDF falls back to DejaVu Sans for the few signs Noto Sans lacks (≤ ≥ →).
if (!['pdftotext', 'pdfsig', 'pdfdetach', 'pdftoppm'].every((t) => existsSync(`/usr/bin/${t}`))) aptInstall(['poppler-utils'], 'poppler-utils (pdftotext, pdfsig) is needed to check the printed batch record and is missing.');
if (!existsSync('/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf')) aptInstall(['fonts-dejavu-core'], 'The DejaVu Sans font (fonts-dejavu-core) is needed for signs Noto Sans lacks in the PDF and is missing.');
let databaseUrl = process.env.DATABASE_URL_TEST;
if (!databaseUrl) databaseUrl = await startThrowawayPostgres();
const env = { ...process.env, DATABASE_URL_TEST: databaseUrl };
delete env.DATABASE_URL; // the tests open their own databases
mkdirSync(join(root, 'test-results'), { recursive: true });
// Which code this run tested, for `npm run compliance:report` (it refuses a run of another commit
// or of uncommitted changes as validation evidence).
const git = (args) => {
	try {
		return execFileSync('git', args, { cwd: root, encoding: 'utf8', stdio: ['ignore', 'pipe', 'ignore'] }).trim();
	} catch {
		return null;
	}
};
writeFileSync(join(root, 'test-results', 'run.json'), JSON.stringify({ commit: git(['rev-parse', 'HEAD']), dirty: (git(['status', '--porcelain']) ?? '') !== '', startedAt: new Date().toISOString() }));

// 2. Unit and integration tests (Vitest), on PGlite and on the PostgreSQL server.
const vitestStatus = run('npx', ['vitest', 'run', '--reporter=default', '--reporter=json', '--outputFile.json=test-results/vitest.json'], { env });

// 3. End-to-end: build, then Playwright drives the built app in Chromium on a free port.
let e2eStatus = run('npm', ['run', 'build', '--silent'], { env });
if (e2eStatus === 0) {
	const port = await freePort();
	e2eStatus = run('npx', ['playwright', 'test'], { env: { ...env, E2E_PORT: String(port), CHROMIUM_PATH: chromium } });
}

for (const c of cleanups.reverse()) c();
const v = countVitest(join(root, 'test-results', 'vitest.json'));
const e = countPlaywright(join(root, 'test-results', 'e2e.json'));
const passed = v.passed + e.passed;
const failed = v.failed + e.failed + (vitestStatus !== 0 && v.failed === 0 ? 1 : 0) + (e2eStatus !== 0 && e.failed === 0 ? 1 : 0);
console.log(`\nunit+integration: ${v.passed} passed, ${v.failed} failed; e2e: ${e.passed} passed, ${e.failed} failed`);
console.log(`total: ${passed} passed, ${failed} failed`);
process.exit(vitestStatus === 0 && e2eStatus === 0 && failed === 0 ? 0 : 1);
