import { expect, test } from '@playwright/test';

// OWASP Secure Headers Project / ASVS 5.0 V3.4: a Content-Security-Policy without unsafe-inline
// scripts (SvelteKit hashes its own bootstrap script), no framing, no MIME sniffing.
test('pages carry a script CSP without unsafe-inline and the usual security headers', async ({ request }) => {
	const res = await request.get('/login');
	expect(res.status()).toBe(200);
	const h = res.headers();
	const csp = h['content-security-policy'] ?? '';
	const scriptSrc = csp.split(';').map((d) => d.trim()).find((d) => d.startsWith('script-src')) ?? '';
	expect(scriptSrc).toMatch(/^script-src 'self'/);
	expect(scriptSrc).not.toContain('unsafe-inline');
	expect(scriptSrc).not.toContain('unsafe-eval');
	expect(scriptSrc).toMatch(/'sha256-[A-Za-z0-9+/=]+'/);
	expect(csp).toContain("frame-ancestors 'none'");
	expect(csp).toContain("object-src 'none'");
	expect(h['x-content-type-options']).toBe('nosniff');
	expect(h['x-frame-options']).toBe('DENY');
	expect(h['referrer-policy']).toBe('same-origin');
	expect(h['x-request-id']).toMatch(/^[0-9a-f-]{36}$/);
});

test('API answers are never cached', async ({ request }) => {
	const res = await request.get('/api/health');
	expect(res.headers()['cache-control']).toBe('no-store');
});

test('the shell reads in German for a German browser', async ({ browser }) => {
	const context = await browser.newContext({ locale: 'de-DE', extraHTTPHeaders: { 'Accept-Language': 'de-DE,de;q=0.9' } });
	const page = await context.newPage();
	await page.goto('/no-such-page');
	await expect(page.getByRole('heading', { name: 'Fehler 404' })).toBeVisible();
	await expect(page.locator('html')).toHaveAttribute('lang', 'de');
	await context.close();
});
