import { describe, expect, it } from 'vitest';
import { isForbiddenCrossSite } from '$lib/server/auth/origin';

const url = new URL('http://localhost:3000/api/equipment/x/runs');
const req = (headers: Record<string, string>, method = 'POST') => new Request(url, { method, headers });

describe('cross-site request refusal (CSRF; OWASP ASVS 5.0 V3.5.3)', () => {
	it('refuses a form POST from another origin, or with no Origin at all', () => {
		expect(isForbiddenCrossSite(req({ 'content-type': 'application/x-www-form-urlencoded', origin: 'http://evil.example' }), url)).toBe(true);
		expect(isForbiddenCrossSite(req({ 'content-type': 'multipart/form-data; boundary=x' }), url)).toBe(true);
		expect(isForbiddenCrossSite(req({ 'content-type': 'text/plain', origin: 'null' }), url)).toBe(true);
	});

	it('lets a same-origin form POST and non-form or safe requests through', () => {
		expect(isForbiddenCrossSite(req({ 'content-type': 'multipart/form-data; boundary=x', origin: 'http://localhost:3000' }), url)).toBe(false);
		expect(isForbiddenCrossSite(req({ 'content-type': 'application/json', origin: 'http://evil.example' }), url)).toBe(false);
		expect(isForbiddenCrossSite(req({ origin: 'http://evil.example' }, 'GET'), url)).toBe(false);
	});

	it('lets an API request carrying a Bearer token post multipart without an Origin (RFC 6750 2.1): no cookie authorises it', () => {
		expect(isForbiddenCrossSite(req({ 'content-type': 'multipart/form-data; boundary=x', authorization: 'Bearer abc.DEF-123' }), url)).toBe(false);
		// …but only on /api/, and only with a well-formed token.
		const page = new URL('http://localhost:3000/login');
		expect(isForbiddenCrossSite(new Request(page, { method: 'POST', headers: { 'content-type': 'application/x-www-form-urlencoded', authorization: 'Bearer abc' } }), page)).toBe(true);
		expect(isForbiddenCrossSite(req({ 'content-type': 'multipart/form-data; boundary=x', authorization: 'Basic abc' }), url)).toBe(true);
	});
});
