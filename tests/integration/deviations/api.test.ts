import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { inArray } from 'drizzle-orm';
import type { RequestEvent } from '@sveltejs/kit';
import type { SessionInfo, SessionUser } from '$lib/server/auth/types';

/**
 * The deviation API routes on the app's own database (PGlite, seeded with the demo): thin routes
 * over the services, bodies through the capped reader, zod validation, statuses as style.md says.
 */
process.env.RIMEBOOK_DATA_DIR = mkdtempSync(join(tmpdir(), 'rimebook-deviation-api-'));
process.env.RIMEBOOK_SEED = 'demo';
const PASSWORD = 'frost-demo-2026';

type Person = { user: SessionUser; session: SessionInfo };

function eventOf(url: string, init: RequestInit, who: Person, params: Record<string, string> = {}): RequestEvent {
	const request = new Request(`http://localhost${url}`, init);
	return {
		url: new URL(request.url),
		request,
		params,
		route: { id: url },
		cookies: { get: () => undefined, getAll: () => [], set: () => undefined, delete: () => undefined, serialize: () => '' },
		locals: { requestId: 'deviation-api', locale: 'en', user: who.user, session: who.session },
		getClientAddress: () => '198.51.100.7',
		platform: undefined,
		setHeaders: () => undefined,
		isDataRequest: false,
		isSubRequest: false,
		fetch
	} as unknown as RequestEvent;
}

const jsonInit = (method: string, body: unknown): RequestInit => ({ method, body: JSON.stringify(body), headers: { 'content-type': 'application/json' } });

describe('deviation API', () => {
	const people = new Map<string, Person>();
	let batchId = '';
	let close: () => Promise<void> = async () => {};
	let list: typeof import('../../../src/routes/api/deviations/+server');
	let one: typeof import('../../../src/routes/api/deviations/[id]/+server');
	let transitions: typeof import('../../../src/routes/api/deviations/[id]/transitions/+server');

	beforeAll(async () => {
		const { database } = await import('$lib/server/db');
		const { prepareDatabase } = await import('$lib/server/startup');
		const { createUserSession, validateSessionToken } = await import('$lib/server/auth/session');
		const { sessionUser } = await import('../auth/support/identity');
		const { batch } = await import('$lib/server/db/schema');
		await prepareDatabase(database);
		close = () => database.close();
		for (const name of ['operator', 'supervisor', 'qa', 'inspector']) {
			const u = await sessionUser(database.db, name);
			const { token } = await createUserSession(database.db, u.id, 'password');
			const v = await validateSessionToken(database.db, token);
			if ('end' in v) throw new Error('no session');
			people.set(name, { user: v.user, session: v.session });
		}
		const [b] = await database.db.select({ id: batch.id }).from(batch).where(inArray(batch.status, ['issued', 'in-progress', 'awaiting-review'])).limit(1);
		batchId = b.id;
		list = await import('../../../src/routes/api/deviations/+server');
		one = await import('../../../src/routes/api/deviations/[id]/+server');
		transitions = await import('../../../src/routes/api/deviations/[id]/transitions/+server');
		// The whole demo seed (every area) runs first; on a shared 2-core machine it can take minutes.
	}, 300_000);
	afterAll(async () => close());

	const who = (name: string) => people.get(name)!;
	const sig = (name: string) => ({ username: name, password: PASSWORD });

	test('POST /api/deviations raises (201); a malformed body is 400; an oversize body is 413 unread', async () => {
		const ok = await list.POST(eventOf('/api/deviations', jsonInit('POST', { batchId, title: 'Stopper hopper ran empty (invented)', description: 'Filling paused 3 min (invented).' }), who('operator')) as never);
		expect(ok.status).toBe(201);
		const raised = (await ok.json()) as { id: string; number: string };
		expect(raised.number).toMatch(/^DEV-/);
		const bad = await list.POST(eventOf('/api/deviations', jsonInit('POST', { batchId, title: '', description: 'x', extra: 1 }), who('operator')) as never);
		expect(bad.status).toBe(400);
		const huge = await list.POST(eventOf('/api/deviations', jsonInit('POST', { batchId, title: 't', description: 'x'.repeat(70_000) }), who('operator')) as never);
		expect(huge.status).toBe(413);
	});

	test('GET /api/deviations filters; GET /api/deviations/[id] returns the history', async () => {
		const r = await list.GET(eventOf(`/api/deviations?batch=${batchId}&kind=manual&q=hopper`, { method: 'GET' }, who('inspector')) as never);
		const body = (await r.json()) as { items: { id: string; title: string }[]; total: number };
		expect(body.total).toBe(1);
		const d = await one.GET(eventOf(`/api/deviations/${body.items[0].id}`, { method: 'GET' }, who('inspector'), { id: body.items[0].id }) as never);
		const detail = (await d.json()) as { events: { action: string }[]; signatures: unknown[]; status: string };
		expect(detail.status).toBe('open');
		expect(detail.events.map((e) => e.action)).toEqual(['deviation.raise']);
	});

	// 211.192, 11.50, 11.10(f): the lifecycle through the API, with its refusals.
	test('the lifecycle through PATCH and POST transitions: 422 incomplete, 409 stale, 403 own submission, 201 signed', async () => {
		const raised = (await (await list.POST(eventOf('/api/deviations', jsonInit('POST', { batchId, title: 'API walk (invented)', description: 'd' }), who('operator')) as never)).json()) as { id: string };
		const id = raised.id;
		const post = (name: string, body: unknown) => transitions.POST(eventOf(`/api/deviations/${id}/transitions`, jsonInit('POST', body), who(name), { id }) as never);
		const patch = (name: string, body: unknown) => one.PATCH(eventOf(`/api/deviations/${id}`, jsonInit('PATCH', body), who(name), { id }) as never);

		expect((await post('qa', { action: 'start-investigation', version: 1, signature: sig('qa') })).status).toBe(201);
		const early = await post('qa', { action: 'submit', version: 2, signature: sig('qa') });
		expect(early.status).toBe(422);
		expect(((await early.json()) as { missing: string[] }).missing).toEqual(['classification', 'investigation', 'rootCause', 'impact']);
		const edited = await patch('qa', { version: 2, fields: { classification: 'minor', investigation: 'Hopper sensor dirty (invented).', rootCause: 'Cleaning step missed (invented).', impact: 'None (invented).' } });
		expect(edited.status).toBe(200);
		const stale = await post('qa', { action: 'submit', version: 2, signature: sig('qa') });
		expect(stale.status).toBe(409);
		expect(((await stale.json()) as { code: string; currentVersion: number }).currentVersion).toBe(3);
		expect((await post('qa', { action: 'submit', version: 3, signature: sig('qa') })).status).toBe(201);
		const own = await post('qa', { action: 'close', version: 4, signature: sig('qa') });
		expect(own.status).toBe(403);
		expect(((await own.json()) as { code: string }).code).toBe('own-submission');
		expect((await post('operator', { action: 'cancel', version: 4, reason: 'x', signature: sig('operator') })).status).toBe(403);
		// The route guard itself refuses a read-only role (thrown as an HttpError, like every guard).
		await expect(post('inspector', { action: 'cancel', version: 4, reason: 'x', signature: sig('inspector') })).rejects.toMatchObject({ status: 403 });
		expect((await patch('qa', { version: 4, fields: { impact: 'changed' } })).status).toBe(409);
		expect((await post('qa', { action: 'cancel', version: 4, reason: 'Raised twice (invented).', signature: sig('qa') })).status).toBe(201);
	});
});
