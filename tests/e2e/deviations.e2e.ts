import { expect, test, type Page } from '@playwright/test';
import { sign, signIn } from './support';

const SHOTS = process.env.E2E_SCREENSHOTS;

async function shot(page: Page, name: string) {
	if (SHOTS) await page.screenshot({ path: `${SHOTS}/${name}.png`, fullPage: true });
}

// Issue 8: a deviation raised by hand on the batch page (21 CFR 211.100(b)), investigated and
// submitted by a supervisor, and closed by QA (211.192), each step signed (11.50) and in the history.
test('an operator raises a deviation by hand; a supervisor investigates and submits; QA closes it', async ({ browser }) => {
	const tablet = { viewport: { width: 1024, height: 768 } };
	const op = await (await browser.newContext(tablet)).newPage();
	await signIn(op, 'operator');
	const batches = await (await op.request.get('/api/batches')).json();
	// The demo batch being executed (the other seeded batch is complete and awaits review).
	const batchId: string = (batches as { id: string; status: string }[]).find((b) => b.status === 'in-progress')!.id;
	await op.goto(`/batches/${batchId}`);
	await op.getByTestId('raise-deviation').click();
	await expect(op).toHaveURL(/\/deviations\/new\?batch=/);
	await op.getByLabel('Step').selectOption({ index: 1 });
	await op.getByLabel('Title').fill('Vial tray dropped at loading (invented)');
	await op.getByLabel('Description').fill('One tray of 120 vials tipped while loading shelf 3; vials set aside (invented).');
	await op.getByLabel('Immediate action').fill('Tray quarantined, area cleaned.');
	await shot(op, 'deviation-new');
	await op.getByRole('button', { name: 'Raise deviation' }).click();
	await expect(op).toHaveURL(/\/deviations\/[0-9a-f-]{36}$/);
	const url = op.url();
	await expect(op.getByTestId('deviation-status')).toHaveText(/Open/);
	// An operator may not cancel: QA's step is not offered.
	await expect(op.getByTestId('transition-cancel')).toHaveCount(0);

	const sup = await (await browser.newContext(tablet)).newPage();
	await signIn(sup, 'supervisor');
	await sup.goto(url);
	await sup.getByTestId('transition-start-investigation').click();
	await sign(sup, 'supervisor');
	await expect(sup.getByTestId('deviation-status')).toHaveText(/Under investigation/);
	await sup.getByLabel('Major').check();
	await sup.getByLabel('Investigation').fill('Tray rail was bent; the loading cart caught on it (invented).');
	await sup.getByLabel('Root cause').fill('Rail damaged during the last cleaning (invented).');
	await sup.getByLabel('Impact on the batch').fill('120 vials rejected and counted in reconciliation; the rest unaffected (invented).');
	await sup.getByLabel('CAPA references').fill('CAPA-2026-021');
	await sup.getByRole('button', { name: 'Save changes' }).click();
	await expect(sup.getByRole('status')).toContainText('Saved');
	await sup.getByTestId('transition-submit').click();
	await sign(sup, 'supervisor');
	await expect(sup.getByTestId('deviation-status')).toHaveText(/Awaiting QA approval/);
	// After submission the content is locked and the submitter cannot close it.
	await expect(sup.getByTestId('deviation-edit')).toHaveCount(0);

	const qa = await (await browser.newContext(tablet)).newPage();
	await signIn(qa, 'qa');
	await qa.goto('/deviations?status=pending-qa-approval');
	await qa.getByRole('link', { name: /Vial tray dropped/ }).click();
	await expect(qa.getByTestId('field-rootCause')).toHaveText('Rail damaged during the last cleaning (invented).');
	await qa.getByTestId('transition-close').click();
	await qa.locator('dialog[open] textarea[name=closureComment]').fill('Investigation accepted; CAPA-2026-021 tracks the rail repair.');
	await sign(qa, 'qa');
	await expect(qa.getByTestId('deviation-status')).toHaveText(/Closed/);
	const history = qa.getByTestId('deviation-history');
	for (const words of ['Raised', 'Investigation started', 'Submitted for QA approval', 'Closed']) await expect(history).toContainText(words);
	await expect(qa.getByText('Priya Halden').first()).toBeVisible();
	await shot(qa, 'deviation-closed');

	// The list filters by state with the keyboard alone: Tab to the state filter, choose, Enter.
	await qa.goto('/deviations');
	await qa.getByLabel('State').selectOption('closed');
	await qa.getByLabel('Search').focus();
	await qa.keyboard.type('Vial tray');
	await qa.keyboard.press('Enter');
	await expect(qa).toHaveURL(/status=closed/);
	await expect(qa.getByTestId('deviation-list').locator('li')).toHaveCount(1);
	await shot(qa, 'deviation-list');
});
