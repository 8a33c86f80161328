import { expect, test } from '@playwright/test';

// Issue 9 "everything shown escaped" on the built server (OWASP XSS Prevention Cheat Sheet, rule 1):
// a script stored in a signed entry's comment, and one put in a URL, come back in the
// rendered HTML (server-side render and hydration data) only escaped, never as a raw tag.
const PASSWORD = process.env.RIMEBOOK_DEMO_PASSWORD ?? 'frost-demo-2026';
const SCRIPT = '<script>rbk7x()</script>';

test('a script stored in a signed entry or sent in a URL is rendered escaped, never raw', async ({ playwright, baseURL }) => {
	const api = await playwright.request.newContext({ baseURL, extraHTTPHeaders: { origin: baseURL! } });
	const login = await api.post('/login', { form: { username: 'operator', password: PASSWORD }, headers: { accept: 'text/html' }, maxRedirects: 0 });
	expect(login.status()).toBe(303);
	// The demo batch being executed: the other seeded batch awaits QA's review (release.e2e).
	const batches = ((await (await api.get('/api/batches')).json()) as { id: string; status: string }[]).filter((b) => b.status === 'in-progress');
	// Find the seeded weighing and correct it with a hostile comment (free text).
	let batchId = '';
	let version = 0;
	for (const b of batches) {
		const view = await (await api.get(`/api/batches/${b.id}`)).json();
		if (view.sections.flatMap((s: { steps: { key: string; history: unknown[] }[] }) => s.steps).some((s: { key: string; history: unknown[] }) => s.key === 'weigh_sucrose' && s.history.length)) {
			batchId = b.id;
			version = view.version;
		}
	}
	expect(batchId).not.toBe('');
	const res = await api.post(`/api/batches/${batchId}/steps/weigh_sucrose/entries`, {
		data: { values: { sucrose_lot: 'SUC-40871', sucrose_balance: 'BAL-07', sucrose_weighed: '600.1' }, reasonCode: 'instrument-re-read', version, comment: `re-read ${SCRIPT} "><img src=x onerror=rbk7x()>`, signature: { username: 'operator', password: PASSWORD } }
	});
	// Stored: free text may hold any characters; showing it is where escaping matters.
	expect(res.status(), await res.text()).toBe(201);
	const pages = [`/batches/${batchId}/steps/weigh_sucrose`, `/batches/${batchId}`, `/login?redirectTo=${encodeURIComponent(SCRIPT)}`, `/no-such-${encodeURIComponent(SCRIPT)}`];
	for (const path of pages) {
		const page = await api.get(path);
		const html = await page.text();
		expect(page.status(), path).toBeLessThan(500);
		expect(html, path).not.toContain('<script>rbk7x');
		expect(html, path).not.toContain('<img src=x onerror=rbk7x');
		// The stored text is on the step page — escaped.
		if (path.includes('/steps/')) expect(html).toContain('&lt;script>rbk7x');
	}
	await api.dispose();
});

// OWASP Secure Headers Project / ASVS 5.0 V3.4, beyond tests/e2e/headers.e2e.ts (which checks /login):
// the same protection on an error page and a signed-in page, plus base-uri, form-action, COOP and
// Permissions-Policy, and never a script CSP with unsafe-inline.
test('error and signed-in pages carry the same CSP and security headers as the sign-in page', async ({ playwright, baseURL }) => {
	const api = await playwright.request.newContext({ baseURL, extraHTTPHeaders: { origin: baseURL! } });
	expect((await api.post('/login', { form: { username: 'qa', password: PASSWORD }, headers: { accept: 'text/html' }, maxRedirects: 0 })).status()).toBe(303);
	for (const path of ['/', '/batches', '/no-such-page']) {
		const res = await api.get(path, { headers: { accept: 'text/html' } });
		const h = res.headers();
		const csp = h['content-security-policy'] ?? '';
		const scriptSrc = csp.split(';').map((d) => d.trim()).find((d) => d.startsWith('script-src')) ?? '';
		expect(scriptSrc, path).toMatch(/^script-src 'self'/);
		expect(scriptSrc, path).not.toMatch(/unsafe-inline|unsafe-eval|\*/);
		expect(csp, path).toContain("base-uri 'self'");
		expect(csp, path).toContain("form-action 'self'");
		expect(csp, path).toContain("frame-ancestors 'none'");
		expect(h['x-content-type-options'], path).toBe('nosniff');
		expect(h['x-frame-options'], path).toBe('DENY');
		expect(h['cross-origin-opener-policy'], path).toBe('same-origin');
		expect(h['permissions-policy'], path).toContain('geolocation=()');
	}
	await api.dispose();
});
