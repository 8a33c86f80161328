import { defineConfig } from '@playwright/test';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

// The built app (adapter-node) on a free port with a fresh data folder; `npm test` picks the port
// and builds first. Debian's Chromium, never a downloaded browser.
const port = Number(process.env.E2E_PORT ?? 4319);
const dataDir = process.env.E2E_DATA_DIR ?? join(tmpdir(), `rimebook-e2e-${port}`);
const baseURL = `http://localhost:${port}`;

export default defineConfig({
	testDir: 'tests/e2e',
	testMatch: '**/*.e2e.ts',
	fullyParallel: false,
	workers: 1,
	retries: 0,
	timeout: 60_000,
	reporter: [['list'], ['json', { outputFile: 'test-results/e2e.json' }]],
	outputDir: 'test-results/e2e-artifacts',
	use: {
		baseURL,
		screenshot: 'only-on-failure',
		trace: 'retain-on-failure',
		launchOptions: {
			executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
			args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync']
		}
	},
	webServer: {
		command: `rm -rf "${dataDir}" && node build`,
		url: `${baseURL}/api/health`,
		reuseExistingServer: false,
		timeout: 120_000,
		stdout: 'pipe',
		env: {
			PORT: String(port),
			HOST: '127.0.0.1',
			ORIGIN: baseURL,
			RIMEBOOK_DATA_DIR: dataDir,
			RIMEBOOK_SEED: 'demo',
			BODY_SIZE_LIMIT: '128M',
			RIMEBOOK_DEMO_PASSWORD: process.env.RIMEBOOK_DEMO_PASSWORD ?? 'frost-demo-2026'
		}
	}
});
