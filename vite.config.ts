import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
	plugins: [tailwindcss(), sveltekit()],
	test: {
		expect: { requireAssertions: true },
		projects: [
			{
				extends: './vite.config.ts',
				test: {
					name: 'unit',
					environment: 'node',
					sequence: { groupOrder: 0 },
					include: ['tests/unit/**/*.test.ts']
				}
			},
			{
				extends: './vite.config.ts',
				test: {
					name: 'integration',
					environment: 'node',
					sequence: { groupOrder: 1 },
					include: ['tests/integration/**/*.test.ts'],
					testTimeout: 60_000,
					hookTimeout: 120_000,
					// Integration files each open their own databases; two at a time suits 2 cores.
					maxWorkers: 2
				}
			}
		]
	}
});
