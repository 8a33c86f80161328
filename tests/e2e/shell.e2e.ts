import { expect, test } from '@playwright/test';

test('health reports the embedded database and the version', async ({ request }) => {
	const res = await request.get('/api/health');
	expect(res.status()).toBe(200);
	const body = await res.json();
	expect(body).toMatchObject({ status: 'ok', database: 'pglite' });
	expect(body.version).toMatch(/^\d+\.\d+\.\d+/);
});

test('an unknown route shows the error page with status 404', async ({ page }) => {
	const res = await page.goto('/no-such-page');
	expect(res?.status()).toBe(404);
	await expect(page.getByRole('heading', { name: 'Error 404' })).toBeVisible();
	await expect(page.getByRole('link', { name: 'Go to Today' })).toBeVisible();
});

test('a signed-out visitor is sent to sign in', async ({ page }) => {
	await page.goto('/');
	await expect(page).toHaveURL(/\/login/);
});
