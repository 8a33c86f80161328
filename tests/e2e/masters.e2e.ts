import { expect, test, type Page } from '@playwright/test';

const PASSWORD = process.env.RIMEBOOK_DEMO_PASSWORD ?? 'frost-demo-2026';

async function signIn(page: Page, username: string) {
	await page.goto('/login?redirectTo=%2Fmasters');
	await page.getByLabel('Username').fill(username);
	await page.getByLabel('Password').fill(PASSWORD);
	await page.getByRole('button', { name: 'Sign in', exact: true }).click();
	await expect(page).toHaveURL(/\/masters$/);
}

/** The signing ceremony's dialog (11.200(a)(1)): username the first time in a session, then the password. */
async function sign(page: Page) {
	const dialog = page.getByRole('dialog');
	await expect(dialog).toBeVisible();
	await dialog.getByLabel('Password').fill(PASSWORD);
	await dialog.getByRole('button', { name: 'Sign', exact: true }).click();
	await expect(dialog).toBeHidden();
}

// The issue's "done when": an author builds a step with a calculated field in the browser, QA
// approves it (a second person, 21 CFR 211.186(a)) and issues a batch from it (211.188).
test('an author builds a step with a calculated field; QA approves, makes it effective and issues a batch', async ({ page, context }) => {
	await signIn(page, 'author');
	await page.getByRole('link', { name: 'New master record' }).click();
	await page.getByLabel('Product name').fill('Corvalin 5 mg powder for injection');
	await page.getByLabel('Product code').fill('CRV-005-LY');
	await page.getByLabel('Strength').fill('5 mg per vial');
	await page.getByLabel('Dosage form').fill('powder for injection (freeze-dried)');
	await page.getByLabel('Nominal batch size').fill('10');
	await page.getByLabel('Theoretical yield at nominal size').fill('5000');
	await page.getByRole('button', { name: 'Create draft' }).click();
	await expect(page).toHaveURL(/\/masters\/[^/]+\/edit$/);
	await expect(page.getByText('No problems found.')).toBeVisible();

	// The validated range of batch sizes (it starts at the nominal size alone); a contradiction shows at once.
	await page.getByRole('button', { name: 'Product and batch' }).click();
	await page.locator('#h-bsmin').fill('12');
	await page.locator('#h-bsmax').fill('11');
	await expect(page.getByText('Limits contradict each other').first()).toBeVisible();
	await page.locator('#h-bsmin').fill('5');
	await expect(page.getByText('No problems found.')).toBeVisible();
	await page.getByRole('button', { name: /^1\.1 / }).click();

	// The first step: a title, a material it uses, and a calculated quantity.
	const step = 'sections-0-steps-0';
	await page.locator(`#s-${step}-title`).fill('Dispense mannitol');
	await page.getByRole('button', { name: 'Add', exact: true }).nth(1).click();
	await page.getByLabel('Item code 1').fill('EXC-0901');
	await page.getByLabel('Name 1').fill('Mannitol');
	await page.locator(`#s-${step}-newkind`).selectOption('calculated');
	await page.getByRole('button', { name: '+ Add field' }).click();
	const field = `f-${step}-fields-0`;
	await page.locator(`#${field}-key`).fill('mannitol_qty');
	await page.locator(`#${field}-label`).fill('Mannitol to dispense');
	await page.locator(`#${field}-unit`).selectOption('g');
	// Formula errors show as they are typed, by the same validator the server runs.
	await page.locator(`#${field}-formula`).fill('batch_size * 40 mg/mL + mannitol_extra');
	await expect(page.locator(`#${field}-formula-i`)).toContainText('Formula names something that does not exist');
	await page.locator(`#${field}-formula`).fill('batch_size * 40 mg/mL + 2 h');
	await expect(page.locator(`#${field}-formula-i`)).toContainText('Units do not fit together');
	await page.locator(`#${field}-formula`).fill('batch_size * 40 mg/mL');
	await expect(page.locator(`#${field}-formula-i`)).toContainText('Formula checks out.');
	await page.getByLabel('Quantity from field 1').selectOption('mannitol_qty');
	await expect(page.getByText('No problems found.')).toBeVisible();

	// Preview as the operator sees it: 10 L × 40 mg/mL = 400 g (hand calculation).
	await page.getByRole('button', { name: 'Preview as the operator sees it' }).click();
	const preview = page.getByRole('article', { name: 'Dispense mannitol' });
	await expect(preview.getByText('400.00 g').first()).toBeVisible();
	await page.getByRole('button', { name: 'Hide preview' }).click();

	await page.getByRole('button', { name: 'Save draft' }).click();
	await expect(page.getByText('✓ Saved.')).toBeVisible();

	// Submit, signed "authored" (first signature of the session: username and password).
	await page.getByRole('link', { name: 'Back to the version' }).click();
	await page.getByRole('button', { name: 'Submit for review' }).click();
	await page.getByRole('dialog').getByLabel('Username').fill('author');
	await sign(page);
	await expect(page.getByRole('status').filter({ hasText: 'Submitted for review and signed.' })).toBeVisible();
	await expect(page.getByText('In review').first()).toBeVisible();
	const masterUrl = page.url().replace(/\?.*$/, '');
	await page.getByRole('button', { name: 'Sign out' }).click();

	// QA approves, makes effective and issues.
	await context.clearCookies();
	await signIn(page, 'qa');
	await page.goto(masterUrl);
	await page.getByRole('button', { name: 'Approve' }).click();
	await page.getByRole('dialog').getByLabel('Username').fill('qa');
	await sign(page);
	await expect(page.getByRole('status').filter({ hasText: 'Approved and signed.' })).toBeVisible();
	await expect(page.getByText('Authored').first()).toBeVisible();
	await page.getByRole('button', { name: 'Make effective' }).click();
	await page.getByRole('button', { name: 'Confirm' }).click();
	await expect(page.getByRole('status').filter({ hasText: 'This version is now effective.' })).toBeVisible();

	await page.getByRole('link', { name: 'Issue a batch record' }).click();
	await expect(page.getByRole('textbox', { name: 'Batch number', exact: true })).toHaveValue(/^CRV-\d{4}-0001$/);
	await page.getByLabel('Actual batch size (L)').fill('8');
	// 8 L × 40 mg/mL = 320 g, scaled live by the same function the server stores.
	await expect(page.getByRole('cell', { name: '320.00 g' })).toBeVisible();
	await page.getByLabel('Actual batch size (L)').fill('12');
	await expect(page.locator('#i-size-h')).toContainText('Batch size outside the allowed range');
	await page.getByLabel('Actual batch size (L)').fill('10');
	await page.getByRole('button', { name: 'Issue and sign' }).click();
	// A later signature of the same session: the password alone (11.200(a)(1)(i)).
	await expect(page.getByRole('dialog').getByLabel('Username')).toHaveCount(0);
	await sign(page);
	await expect(page.getByRole('status').filter({ hasText: /Batch CRV-\d{4}-0001 issued and signed\./ })).toBeVisible();
	// The next proposal moves on; a number already used is refused inside the dialog, nothing issued.
	const numberBox = page.getByRole('textbox', { name: 'Batch number', exact: true });
	await expect(numberBox).toHaveValue(/^CRV-\d{4}-0002$/);
	const taken = (await numberBox.inputValue()).replace(/0002$/, '0001');
	await numberBox.fill(taken);
	await page.getByRole('button', { name: 'Issue and sign' }).click();
	const dialog = page.getByRole('dialog');
	await dialog.getByLabel('Password').fill(PASSWORD);
	await dialog.getByRole('button', { name: 'Sign', exact: true }).click();
	await expect(dialog.getByRole('alert')).toContainText('That batch number is taken already');
	await dialog.getByRole('button', { name: 'Cancel' }).click();

	// The API agrees: the version is effective and names its hash.
	const list = await (await page.request.get('/api/masters?code=CRV-005-LY')).json();
	expect(list).toMatchObject([{ code: 'CRV-005-LY', version: 1, status: 'effective' }]);
});

test('the API: import refuses an invalid template naming every issue, accepts a valid one with 201', async ({ playwright, baseURL }) => {
	const api = await playwright.request.newContext({ baseURL });
	await api.post('/login', { form: { username: 'author', password: PASSWORD }, headers: { origin: baseURL!, accept: 'text/html' }, maxRedirects: 0 });
	const [effective] = await (await api.get('/api/masters?status=effective&code=TAV-020-LY')).json();
	const exported = await (await api.get(`/api/masters/${effective.id}?format=export`)).json();
	expect(exported.contentHash).toBe(effective.templateHash);

	const bad = structuredClone(exported.template);
	bad.header.productCode = 'BAD-API';
	bad.sections[0].steps[0].fields[0].formula = 'batch_size * (';
	bad.sections[0].steps[0].fields[1].key = 'sucrose_qty';
	const refused = await api.post('/api/masters', { data: bad, headers: { origin: baseURL! } });
	expect(refused.status()).toBe(400);
	const body = await refused.json();
	expect(body.message).toMatch(/problem/);
	expect(body.issues.map((i: { code: string }) => i.code)).toEqual(expect.arrayContaining(['formula.parse', 'key.duplicate']));

	const good = { ...exported.template, header: { ...exported.template.header, productCode: 'TAV-020-API' } };
	const created = await api.post('/api/masters', { data: good, headers: { origin: baseURL! } });
	expect(created.status()).toBe(201);
	const { id, version } = await created.json();
	const got = await (await api.get(`/api/masters/${id}`)).json();
	expect([got.status, got.version, got.template.header.productCode]).toEqual(['draft', version, 'TAV-020-API']);
	// An inspector reads masters but may not import (11.10(d), (g)).
	const inspector = await playwright.request.newContext({ baseURL });
	await inspector.post('/login', { form: { username: 'inspector', password: PASSWORD }, headers: { origin: baseURL!, accept: 'text/html' }, maxRedirects: 0 });
	expect((await inspector.get('/api/masters')).status()).toBe(200);
	expect((await inspector.post('/api/masters', { data: good, headers: { origin: baseURL! } })).status()).toBe(403);
	await api.dispose();
	await inspector.dispose();
});

// 21 CFR 211.100(a): changes to a master are drafted and reviewed; the reviewer sees what changed.
test('a new version is a copy of the latest; a reordered step and a changed limit show in the comparison', async ({ page }) => {
	await signIn(page, 'author');
	await page.getByRole('link', { name: 'Details: TAV-020-LY v2' }).click();
	await page.getByRole('button', { name: 'Start a new version' }).click();
	await expect(page).toHaveURL(/\/edit$/);
	await expect(page.getByRole('heading', { name: 'Edit TAV-020-LY v3' })).toBeVisible();
	// Keyboard: move "Thaw the drug substance" up one place; focus follows the step.
	const up = page.getByRole('button', { name: 'Move up: Thaw the drug substance' });
	await up.focus();
	await page.keyboard.press('Enter');
	await expect(page.getByRole('button', { name: /^1\.2 Thaw the drug substance/ })).toBeVisible();
	await expect(page.getByRole('button', { name: 'Move up: Thaw the drug substance' })).toBeFocused();
	// Step 2.2, mixing time: 10 … 30 min becomes 15 … 30 min.
	await page.getByRole('button', { name: /^2\.2 Add the drug substance/ }).click();
	await page.locator('#f-sections-1-steps-1-fields-1-lim-min').fill('15');
	await page.getByRole('button', { name: 'Save draft' }).click();
	await expect(page.getByText('✓ Saved.')).toBeVisible();
	await page.getByRole('link', { name: 'Back to the version' }).click();
	await page.getByRole('link', { name: 'Compare with another version' }).click();
	await expect(page.getByRole('heading', { name: /Compare versions/ })).toBeVisible();
	await expect(page.getByRole('status').filter({ hasText: '0 added · 0 removed · 1 changed · 1 moved' })).toBeVisible();
	const change = page.getByRole('listitem').filter({ hasText: 'Mixing time' });
	await expect(change).toContainText('10 … 30 min');
	await expect(change).toContainText('15 … 30 min');
	await expect(page.getByRole('listitem').filter({ hasText: 'Moved' })).toContainText(/Thaw the drug substance|Dispense buffer salts/);
	// The approved and effective v2 itself never changed: its page offers no editing.
	await page.getByRole('link', { name: 'Version 2' }).first().click();
	await expect(page.getByRole('link', { name: 'Edit draft' })).toHaveCount(0);
});
