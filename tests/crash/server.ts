import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { randomBytes } from 'node:crypto';
import pg from 'pg';

/**
 * The built app (`node build`, adapter-node) as a child process on a free loopback port, on a
 * store of its own that outlives the process: a PGlite data folder, or a fresh database on the
 * PostgreSQL server of DATABASE_URL_TEST. Used by the crash test and the soak run.
 */
export const PASSWORD = process.env.RIMEBOOK_DEMO_PASSWORD ?? 'frost-demo-2026';

export async function freePort(): Promise<number> {
	return new Promise((resolve, reject) => {
		const s = createServer();
		s.listen(0, '127.0.0.1', () => {
			const port = (s.address() as { port: number }).port;
			s.close(() => resolve(port));
		});
		s.on('error', reject);
	});
}

export interface Store {
	kind: 'pglite' | 'postgresql';
	env: Record<string, string>;
	dispose(): Promise<void>;
}

export async function createStore(kind: 'pglite' | 'postgresql'): Promise<Store> {
	if (kind === 'pglite') {
		const dir = mkdtempSync(join(tmpdir(), 'rimebook-crash-'));
		return { kind, env: { RIMEBOOK_DATA_DIR: dir }, dispose: async () => rmSync(dir, { recursive: true, force: true }) };
	}
	const base = process.env.DATABASE_URL_TEST;
	if (!base) throw new Error('DATABASE_URL_TEST is not set');
	const name = `rimebook_crash_${randomBytes(6).toString('hex')}`;
	const admin = new pg.Client({ connectionString: base });
	await admin.connect();
	await admin.query(`create database ${name}`);
	await admin.end();
	const url = new URL(base);
	url.pathname = `/${name}`;
	// Attachments still go to a folder; the database is the server's.
	const dir = mkdtempSync(join(tmpdir(), 'rimebook-crash-pg-'));
	return {
		kind,
		env: { RIMEBOOK_DATA_DIR: dir, DATABASE_URL: url.toString() },
		async dispose() {
			const c = new pg.Client({ connectionString: base });
			await c.connect();
			await c.query(`drop database if exists ${name} with (force)`);
			await c.end();
			rmSync(dir, { recursive: true, force: true });
		}
	};
}

export interface Server {
	base: string;
	process: ChildProcess;
	/** SIGKILL: no shutdown hook, no flush, no close. */
	kill(): Promise<void>;
	stop(): Promise<void>;
}

export async function startServer(store: Store, port: number, cwd = process.cwd()): Promise<Server> {
	const base = `http://127.0.0.1:${port}`;
	const env: Record<string, string> = { ...(process.env as Record<string, string>), ...store.env, PORT: String(port), HOST: '127.0.0.1', ORIGIN: base, RIMEBOOK_SEED: 'demo', RIMEBOOK_DEMO_PASSWORD: PASSWORD, BODY_SIZE_LIMIT: '128M' };
	if (!store.env.DATABASE_URL) delete env.DATABASE_URL;
	const child = spawn(process.execPath, ['build'], { cwd, env, stdio: ['ignore', 'ignore', 'pipe'] });
	let stderr = '';
	child.stderr!.on('data', (d: Buffer) => (stderr = (stderr + d.toString()).slice(-4000)));
	const exited = new Promise<void>((r) => child.once('exit', () => r()));
	const started = Date.now();
	for (;;) {
		if (child.exitCode !== null) throw new Error(`the server exited with ${child.exitCode} on start:\n${stderr}`);
		if (Date.now() - started > 180_000) {
			child.kill('SIGKILL');
			throw new Error(`the server did not start within 180 s (is the app built?)\n${stderr}`);
		}
		try {
			if ((await fetch(`${base}/api/health`)).ok) break;
		} catch {
			/* not listening yet */
		}
		await new Promise((r) => setTimeout(r, 200));
	}
	return {
		base,
		process: child,
		async kill() {
			child.kill('SIGKILL');
			await exited;
		},
		async stop() {
			if (child.exitCode !== null || child.signalCode !== null) return;
			child.kill('SIGTERM');
			await Promise.race([exited, new Promise((r) => setTimeout(r, 15_000))]);
			if (child.exitCode === null && child.signalCode === null) {
				child.kill('SIGKILL');
				await exited;
			}
		}
	};
}

/** A session cookie for a demo person (the sign-in form, as a browser posts it). */
export async function signIn(base: string, username: string): Promise<string> {
	const res = await fetch(`${base}/login`, { method: 'POST', body: new URLSearchParams({ username, password: PASSWORD }), headers: { origin: base, accept: 'text/html' }, redirect: 'manual' });
	const cookie = res.headers.get('set-cookie')?.split(';')[0];
	if (!cookie) throw new Error(`${username} could not sign in (${res.status})`);
	return cookie;
}
