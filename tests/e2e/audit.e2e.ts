import { expect, test } from '@playwright/test';
import { readFileSync } from 'node:fs';
import { spawnSync } from 'node:child_process';

// The inspector finds, filters, exports and verifies the trail in the browser (issue 4, "Done when";
// 21 CFR 11.10(b), (e)). Demo account and password from the invented demo scenario.
test.beforeEach(async ({ page }) => {
	await page.goto('/login?redirectTo=/audit');
	await page.locator('input[name="username"]').fill('inspector');
	await page.locator('input[name="password"]').fill(process.env.RIMEBOOK_DEMO_PASSWORD ?? 'frost-demo-2026');
	await page.locator('button[type="submit"]').click();
	await expect(page).toHaveURL(/\/audit/);
});

test('the inspector reads and filters the audit trail, then exports a copy that verifies offline', async ({ page }, info) => {
	await expect(page.getByRole('heading', { name: 'Audit trail' })).toBeVisible();
	const rows = page.locator('tbody tr');
	await expect(rows.first()).toContainText(/\./);
	const all = await rows.count();
	expect(all).toBeGreaterThan(10);
	await page.screenshot({ path: info.outputPath('audit-trail.png') });

	await page.getByLabel('Action').fill('equipment.create');
	await page.getByRole('button', { name: 'Apply filters' }).click();
	await expect(page).toHaveURL(/action=equipment.create/);
	await expect(rows.first()).toContainText('equipment.create');
	const filtered = await rows.count();
	expect(filtered).toBeLessThan(all);
	for (let i = 0; i < filtered; i++) await expect(rows.nth(i)).toContainText('equipment.create');

	const download = page.waitForEvent('download');
	await page.getByRole('link', { name: 'Export JSONL' }).click();
	const file = await (await download).path();
	const out = spawnSync('npx', ['tsx', 'scripts/audit-verify-export.ts', file!], { encoding: 'utf8' });
	expect(out.status, out.stderr).toBe(0);
	expect(readFileSync(file!, 'utf8').split('\n')[0]).toContain('"coverage":"filtered"');
});

test('the inspector verifies the chain on the integrity page', async ({ page }, info) => {
	await page.getByRole('link', { name: 'Verify integrity' }).click();
	// Inspectors change nothing: signing a checkpoint is for QA and admins (audit.checkpoint).
	await expect(page.getByRole('heading', { name: 'Integrity of the audit trail' })).toBeVisible();
	await expect(page.getByRole('button', { name: 'Sign a checkpoint now' })).toHaveCount(0);
	// The schedule signs the first checkpoint at start-up.
	await expect(page.locator('table tbody tr').first()).toBeVisible();
	await page.getByRole('button', { name: 'Verify now' }).click();
	await expect(page.getByText('Intact')).toBeVisible();
	await page.screenshot({ path: info.outputPath('audit-verify.png'), fullPage: true });
});
