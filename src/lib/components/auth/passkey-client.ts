import type { Messages } from '$lib/i18n';

/** A JSON POST to one of our endpoints; errors come back as `{ message, code }` (style.md, API routes). */
export async function postJson<T>(url: string, body: unknown): Promise<{ ok: true; data: T } | { ok: false; status: number; code: string; message: string }> {
	const res = await fetch(url, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(body ?? {}) });
	const data = await res.json().catch(() => ({}));
	if (res.ok) return { ok: true, data: data as T };
	return { ok: false, status: res.status, code: String(data?.code ?? ''), message: String(data?.message ?? '') };
}

/** The catalogue's message for an error code, else a plain fallback. */
export function errorMessage(m: Messages, code: string): string {
	return (m.auth.errors as Record<string, string>)[code] ?? m.common.unknownError;
}

/** A WebAuthn ceremony the person cancelled or let time out is not an error to report loudly. */
export function isCancelled(err: unknown): boolean {
	return err instanceof Error && (err.name === 'NotAllowedError' || err.name === 'AbortError');
}
