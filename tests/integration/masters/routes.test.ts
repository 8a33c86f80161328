import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import { isActionFailure, isHttpError, type RequestEvent } from '@sveltejs/kit';
import type { Role } from '$lib/domain/permissions';
import type { SessionUser } from '$lib/server/auth/types';

/**
 * The masters routes' own refusals, which must come before any database work: the app's
 * database singleton is never connected here, so a route that reached it would throw instead.
 */
process.env.RIMEBOOK_DATA_DIR = mkdtempSync(join(tmpdir(), 'rimebook-masters-routes-'));

function person(role: Role): SessionUser {
	return { id: `user-${role}`, username: role, name: `Invented ${role}`, kind: 'person', roles: [role], mustChangePassword: false, locale: 'en' } as SessionUser;
}

function eventOf(path: string, request: Request, user: SessionUser, params: Record<string, string> = {}): RequestEvent {
	return {
		url: new URL(request.url),
		request,
		params,
		route: { id: path },
		cookies: { get: () => undefined, getAll: () => [], set: () => undefined, delete: () => undefined, serialize: () => '' },
		locals: { requestId: 'masters-routes', locale: 'en', user, session: null },
		getClientAddress: () => '198.51.100.7',
		platform: undefined,
		setHeaders: () => undefined,
		isDataRequest: false,
		isSubRequest: false,
		fetch
	} as unknown as RequestEvent;
}

/** A body stream of `chunks` × 64 KiB that counts how much was pulled from it. */
function countingStream(chunks: number): { stream: ReadableStream<Uint8Array>; pulled: () => number } {
	let pulled = 0;
	const chunk = new Uint8Array(65_536).fill(0x20);
	const stream = new ReadableStream<Uint8Array>({
		pull(controller) {
			if (pulled >= chunks) return controller.close();
			pulled++;
			controller.enqueue(chunk);
		}
	});
	return { stream, pulled: () => pulled };
}

/** A form action's refusal as [status, code], or null when it did not refuse. */
function failureOf(r: unknown): [number, string] | null {
	if (!isActionFailure(r)) return null;
	return [r.status, String((r.data as { code?: unknown } | undefined)?.code)];
}

async function statusOf(p: unknown): Promise<number> {
	try {
		const r = await p;
		if (r instanceof Response) return r.status;
		if (isActionFailure(r)) return r.status;
		return 200;
	} catch (err) {
		if (isHttpError(err)) return err.status;
		throw err;
	}
}

describe('masters routes refuse before any database work', () => {
	// The lead's change: return needs master.return (author, QA); 11.10(g), inspectors change nothing.
	test("an inspector's POST to ?/return is refused with 403", async () => {
		const { actions } = await import('../../../src/routes/(app)/masters/[id]/+page.server');
		const form = new FormData();
		form.set('reason', 'not mine to send back');
		for (const role of ['inspector', 'operator', 'supervisor', 'admin'] as const) {
			const request = new Request('http://localhost/masters/m1?/return', { method: 'POST', body: form });
			expect(await statusOf(actions.return(eventOf('/(app)/masters/[id]', request, person(role), { id: 'm1' }) as never)), role).toBe(403);
		}
	});

	// Review finding 8 (OWASP ASVS 4.0.3 V12.1.1, from memory): the API import caps the body before parsing.
	test('POST /api/masters: a declared body over 2 MB gets 413 unread; an undeclared one is cut off at the cap', async () => {
		const { POST } = await import('../../../src/routes/api/masters/+server');
		const declared = new Request('http://localhost/api/masters', { method: 'POST', body: '{}', headers: { 'content-type': 'application/json', 'content-length': '3000000' } });
		const r1 = (await POST(eventOf('/api/masters', declared, person('author')) as never)) as Response;
		expect(r1.status).toBe(413);
		expect((await r1.json()).code).toBe('too-large');

		// 48 chunks of 64 KiB = 3.1 MB with no content-length: reading stops one chunk past 2 MB.
		const { stream, pulled } = countingStream(48);
		const chunked = new Request('http://localhost/api/masters', { method: 'POST', body: stream, headers: { 'content-type': 'application/json' }, duplex: 'half' } as RequestInit);
		expect(await statusOf(POST(eventOf('/api/masters', chunked, person('author')) as never))).toBe(413);
		expect(pulled()).toBeLessThanOrEqual(Math.ceil(2_000_000 / 65_536) + 2);
	});

	// Review finding 8: the page import and the editor's save cap the form before formData() parses it.
	test('the masters import form and the draft save refuse an oversized body with 413', async () => {
		const list = await import('../../../src/routes/(app)/masters/+page.server');
		const big = countingStream(48);
		const imp = new Request('http://localhost/masters?/import', { method: 'POST', body: big.stream, headers: { 'content-type': 'multipart/form-data; boundary=x' }, duplex: 'half' } as RequestInit);
		const failed: unknown = await list.actions.import(eventOf('/(app)/masters', imp, person('author')) as never);
		expect(failureOf(failed)).toEqual([413, 'too-large']);
		expect(big.pulled()).toBeLessThan(48);

		const edit = await import('../../../src/routes/(app)/masters/[id]/edit/+page.server');
		const save = new Request('http://localhost/masters/m1/edit?/save', { method: 'POST', body: 'x', headers: { 'content-type': 'application/x-www-form-urlencoded', 'content-length': String(7_000_000) } });
		const refused: unknown = await edit.actions.save(eventOf('/(app)/masters/[id]/edit', save, person('author'), { id: 'm1' }) as never);
		expect(failureOf(refused)).toEqual([413, 'too-large']);
	});

	// Review finding 37: a refused new-master form echoes only its own string fields, never a File.
	test('masters/new answers a refused form with serialisable values only', async () => {
		const { actions } = await import('../../../src/routes/(app)/masters/new/+page.server');
		const form = new FormData();
		form.set('productName', 'Invented lyophilisate');
		form.set('productCode', new File(['not a code'], 'code.txt'));
		form.set('unexpected', 'echo me');
		const request = new Request('http://localhost/masters/new', { method: 'POST', body: form });
		const r: unknown = await actions.default(eventOf('/(app)/masters/new', request, person('author')) as never);
		expect(failureOf(r)).toEqual([400, 'invalid']);
		const values = (r as { data: { values: Record<string, unknown> } }).data.values;
		expect(values).toEqual({ productName: 'Invented lyophilisate' });
		expect(JSON.parse(JSON.stringify(values))).toEqual(values);
	});
});
