#!/usr/bin/env node
// `npm start`: builds the app when the build is missing or older than the sources, starts it,
// and once it answers prints the address and the demo accounts. Plain Node, no dependencies.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';

const root = new URL('..', import.meta.url).pathname;
const port = process.env.PORT ?? '3000';
const origin = process.env.ORIGIN ?? `http://localhost:${port}`;

function newest(dir) {
	let t = 0;
	for (const entry of readdirSync(dir, { withFileTypes: true })) {
		const p = join(dir, entry.name);
		t = Math.max(t, entry.isDirectory() ? newest(p) : statSync(p).mtimeMs);
	}
	return t;
}

const built = join(root, 'build', 'index.js');
const sources = Math.max(newest(join(root, 'src')), statSync(join(root, 'package.json')).mtimeMs);
if (!existsSync(built) || statSync(built).mtimeMs < sources) {
	console.log('[rimebook] building the app (about 10 s)…');
	const r = spawnSync('npm', ['run', 'build', '--silent'], { cwd: root, stdio: ['ignore', 'ignore', 'inherit'] });
	if (r.status !== 0) {
		console.error('[rimebook] the build failed; see the messages above.');
		process.exit(r.status ?? 1);
	}
}

const server = spawn(process.execPath, ['build'], {
	cwd: root,
	stdio: 'inherit',
	env: { BODY_SIZE_LIMIT: '128M', ...process.env, PORT: port, ORIGIN: origin, NODE_ENV: process.env.NODE_ENV ?? 'production' }
});
for (const sig of ['SIGINT', 'SIGTERM']) process.on(sig, () => server.kill(sig));
server.on('exit', (code) => process.exit(code ?? 0));

const demo = (process.env.RIMEBOOK_SEED ?? 'demo') === 'demo';
const password = process.env.RIMEBOOK_DEMO_PASSWORD || 'frost-demo-2026';
for (let i = 0; i < 240; i++) {
	await new Promise((r) => setTimeout(r, 500));
	if (server.exitCode !== null) break;
	try {
		const res = await fetch(`http://127.0.0.1:${port}/api/health`);
		if (res.ok) {
			console.log(`\n  Rimebook is running at ${origin}\n`);
			if (demo) {
				console.log('  Demo accounts (evaluation only, never for GMP use), all with the password');
				console.log(`  "${password}":`);
				console.log('    author      writes master batch records');
				console.log('    operator    executes batch records on the floor (also: operator2)');
				console.log('    supervisor  verifies critical steps');
				console.log('    qa          approves masters, issues, reviews and releases batches');
				console.log('    inspector   reads everything, changes nothing');
				console.log('    admin       manages people, equipment and settings\n');
			}
			console.log('  Stop with Ctrl+C.\n');
			break;
		}
	} catch {
		// not listening yet
	}
}
