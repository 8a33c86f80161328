/**
 * Where to go after sign-in: only a path on this site (ASVS V5 / OWASP "Unvalidated redirects":
 * no open redirect). Anything else, including `//host`, `/\host` and absolute URLs, gives `/`.
 */
export function safeRedirectPath(candidate: string | null | undefined, fallback = '/'): string {
	if (!candidate || !candidate.startsWith('/') || candidate.startsWith('//') || candidate.startsWith('/\\')) return fallback;
	if (/[\u0000-\u001f\\]/.test(candidate)) return fallback;
	try {
		const base = 'http://rimebook.invalid';
		const url = new URL(candidate, base);
		if (url.origin !== base) return fallback;
		// Never bounce back into the sign-in pages themselves.
		if (url.pathname === '/login' || url.pathname === '/logout') return fallback;
		return url.pathname + url.search + url.hash;
	} catch {
		return fallback;
	}
}
