import { expect, test } from '@playwright/test';
import { PASSWORD, sign, signIn } from './support';

// Issue 6 "Done when": an operator executes a step with an out-of-limit value and a supervisor
// verifies it, then a correction is made and shown struck through (EU GMP Ch. 4.9; 21 CFR 211.188(b)(11)).
test('operator records an out-of-limit value, supervisor verifies, the correction strikes the old value through', async ({ browser }) => {
	const op = await (await browser.newContext({ viewport: { width: 1024, height: 768 } })).newPage();
	await signIn(op, 'operator');
	await op.goto('/batches');
	await expect(op.locator('main a[href^="/batches/"]').first()).toBeVisible();
	const list = await (await op.request.get('/api/batches')).json();
	// The demo batch being executed (the other seeded batch is complete and awaits review).
	const batchId: string = (list as { id: string; status: string }[]).find((b) => b.status === 'in-progress')!.id;
	// The seed performed the weighing steps; do the two before "Add the drug substance" through the API (same service).
	const state = await (await op.request.get(`/api/batches/${batchId}`)).json();
	const sig = { username: 'operator', password: PASSWORD };
	for (const [step, values] of [
		['thaw_ds', { ds_lot: 'TVA-DS-2611', ds_cold_room: 'CLD-02', ds_concentration: '50.0', ds_thawed_at: new Date(Date.now() - 60_000).toISOString() }],
		['prepare_buffer', { compounding_vessel: 'VSL-03', wfi_temperature: '20.0', solids_dissolved: true }]
	] as const) {
		const res = await op.request.post(`/api/batches/${batchId}/steps/${step}/entries`, { data: { values, signature: sig } });
		expect(res.status(), `${step}: ${await res.text()}`).toBe(201);
	}
	expect(state.number).toBeTruthy();

	await op.goto(`/batches/${batchId}/steps/add_ds`);
	await op.getByLabel('Drug substance added').fill('4800');
	// Mixing time limits 10–30 min (demo template): 45 is out of limits.
	await op.getByLabel('Mixing time').fill('45');
	await expect(op.locator('[data-field=mixing_time]')).toHaveClass(/border-alert-600/);
	await expect(op.getByTestId('sign-entry')).toBeDisabled();
	await op.getByLabel(/Comment/).fill('Stirrer restarted after a stop; mixed longer.');
	await op.screenshot({ path: 'test-results/batch-step-entry-1024x768.png', fullPage: true });
	await op.getByTestId('sign-entry').click();
	await sign(op, 'operator');
	await expect(op.getByText(/Deviation DEV-\d{4}-\d{4} raised/)).toBeVisible();
	await expect(op.locator('[data-testid=deviation]')).toHaveCount(1);

	// The supervisor, in another browser, verifies the critical step.
	const sup = await (await browser.newContext({ viewport: { width: 768, height: 1024 } })).newPage();
	await signIn(sup, 'supervisor');
	await sup.goto(`/batches/${batchId}`);
	await sup.screenshot({ path: 'test-results/batch-page-768x1024.png', fullPage: true });
	await expect(sup.getByTestId('step-add_ds')).toContainText('Needs attention');
	await sup.goto(`/batches/${batchId}/steps/add_ds`);
	await sup.getByTestId('verify').click();
	await sign(sup, 'supervisor');
	await expect(sup.getByText(/Verified/).first()).toBeVisible();

	// The operator's batch page picks the verification up by polling, without a reload.
	await op.goto(`/batches/${batchId}`);
	await expect(op.getByTestId('step-add_ds')).toContainText(/Verified by Dario Kettleby/, { timeout: 15_000 });

	// A correction: a new entry supersedes the old one; the old value stays, struck through, with who/when/why.
	await op.goto(`/batches/${batchId}/steps/add_ds`);
	await op.getByTestId('correct').click();
	await op.getByLabel('Mixing time').fill('25');
	await op.getByLabel(/Reason for the correction/).selectOption('transcription-error');
	await op.getByTestId('sign-entry').click();
	await sign(op, 'operator');
	const old = op.locator('[data-superseded=yes] [data-value=mixing_time]');
	await expect(old).toContainText('45');
	await expect(old).toHaveClass(/line-through/);
	await expect(op.getByTestId('superseded-note')).toContainText(/Superseded by Tomas Reyvik.*Transcription error/);
	await expect(op.locator('[data-superseded=no] [data-value=mixing_time]')).toContainText('25');
	await op.screenshot({ path: 'test-results/batch-step-corrected-1024x768.png', fullPage: true });
	await op.setViewportSize({ width: 768, height: 1024 });
	await op.screenshot({ path: 'test-results/batch-step-corrected-768x1024.png', fullPage: true });
});
