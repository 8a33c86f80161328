import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { expect, test } from '@playwright/test';

/** Starts the built server with an environment; resolves with its exit code and output. */
function startServer(env: Record<string, string>, timeoutMs = 30_000): Promise<{ code: number | null; output: string }> {
	return new Promise((resolve) => {
		const child = spawn(process.execPath, ['build'], { env: { ...process.env, ...env }, stdio: ['ignore', 'pipe', 'pipe'] });
		let output = '';
		child.stdout.on('data', (d) => (output += d));
		child.stderr.on('data', (d) => (output += d));
		const timer = setTimeout(() => child.kill('SIGKILL'), timeoutMs);
		child.on('exit', (code) => {
			clearTimeout(timer);
			resolve({ code, output });
		});
	});
}

test.describe('start-up refuses bad configuration with the cause and the fix', () => {
	test('an unknown time zone stops start-up naming the variable', async () => {
		const dir = mkdtempSync(join(tmpdir(), 'rimebook-start-'));
		const r = await startServer({ PORT: '0', RIMEBOOK_DATA_DIR: dir, RIMEBOOK_SITE_TIMEZONE: 'Mars/Olympus_Mons' });
		rmSync(dir, { recursive: true, force: true });
		expect(r.code).not.toBe(0);
		expect(r.output).toContain('RIMEBOOK_SITE_TIMEZONE must be an IANA time zone name');
	});

	test('an unreachable DATABASE_URL stops start-up with the fix', async () => {
		const r = await startServer({ PORT: '0', DATABASE_URL: 'postgres://x:y@127.0.0.1:9/none' });
		expect(r.code).not.toBe(0);
		expect(r.output).toMatch(/cannot be reached.*Fix: start the server/);
	});

	test('a port in use stops start-up naming the port', async () => {
		const blocker = createServer();
		await new Promise<void>((r) => blocker.listen(0, '0.0.0.0', () => r()));
		const port = (blocker.address() as { port: number }).port;
		const dir = mkdtempSync(join(tmpdir(), 'rimebook-start-'));
		try {
			const r = await startServer({ PORT: String(port), RIMEBOOK_DATA_DIR: dir, RIMEBOOK_SEED: 'none' });
			expect(r.code).not.toBe(0);
			expect(r.output).toContain(`port ${port} is already in use`);
		} finally {
			blocker.close();
			rmSync(dir, { recursive: true, force: true });
		}
	});
});
