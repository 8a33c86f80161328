/**
 * The review and disposition API routes called as SvelteKit calls them (a RequestEvent with
 * locals.user and locals.session), on the demo's bulk-solution batch (seed/review.ts).
 */
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { eq } from 'drizzle-orm';
import { databaseKinds, type TestDatabase } from '../support/databases';
import { batch, masterRecord } from '$lib/server/db/schema';
import type { SessionInfo, SessionUser } from '$lib/server/auth/types';
import { seededDatabase } from '../batches/support';
import { closeDeviations, personOf, writeCounts, type Person } from './support';

let t: TestDatabase;
vi.mock('$lib/server/db', () => ({
	get database() {
		return t.handle;
	}
}));

const reviewRoute = await import('../../../src/routes/api/batches/[id]/review/+server');
const { POST: disposition } = await import('../../../src/routes/api/batches/[id]/disposition/+server');

type Handler<E> = (e: E) => Response | Promise<Response>;
async function call<E>(handler: Handler<E>, id: string, who: { user: SessionUser; session: SessionInfo | null }, body?: unknown): Promise<Response> {
	const url = new URL(`http://localhost/api/batches/${id}/review`);
	const init: RequestInit | undefined = body === undefined ? undefined : { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(body) };
	try {
		return await handler({ url, params: { id }, locals: { user: who.user, session: who.session, requestId: 'test', locale: 'en' }, request: new Request(url, init), getClientAddress: () => '10.3.0.1' } as unknown as E);
	} catch (e) {
		const h = e as { status?: number; body?: unknown };
		if (typeof h.status === 'number') return Response.json(h.body, { status: h.status });
		throw e;
	}
}

interface ReviewJson {
	batch: { status: string; version: number };
	items: { key: string; kind: string; hash: string; state: string; markable: boolean }[];
	release: { allowed: boolean; reasons: { code: string; subjects: string[] }[] };
	disposition: { decision: string; signature: { meaning: string; printedName: string } | null } | null;
}

describe.each(databaseKinds)('review API on %s', (kind) => {
	let id: string;
	let qa: Person;
	let operator: Person;
	let supervisor: Person;

	beforeAll(async () => {
		t = await seededDatabase(kind);
		const [row] = await t.handle.db.select({ id: batch.id }).from(batch).innerJoin(masterRecord, eq(masterRecord.id, batch.masterRecordId)).where(eq(masterRecord.code, 'TAV-020-BS'));
		id = row.id;
		qa = await personOf(t.handle.db, 'qa');
		operator = await personOf(t.handle.db, 'operator');
		supervisor = await personOf(t.handle.db, 'supervisor');
	}, 240_000);
	afterAll(async () => t?.dispose());

	// 21 CFR 11.10(d), (g): review and disposition are QA's.
	it('refuses the review to an operator (403) and shows it to QA with every gate', async () => {
		expect((await call(reviewRoute.GET, id, operator)).status).toBe(403);
		expect((await call(disposition, id, operator, { decision: 'released', signature: { password: 'x' } })).status).toBe(403);
		const res = await call(reviewRoute.GET, id, qa);
		expect(res.status).toBe(200);
		const body = (await res.json()) as ReviewJson;
		expect(body.batch.status).toBe('awaiting-review');
		expect(body.items.map((i) => i.kind).sort()).toEqual(['audit-trail', 'deviation', 'out-of-limit']);
		expect(body.release.reasons.map((r) => r.code).sort()).toEqual(['open-deviation', 'unreviewed-item']);
	});

	// 21 CFR 211.192: a release with gates open answers 409 with every reason, and writes nothing.
	it('answers a release with open gates with 409 and the reasons; a malformed body with 400', async () => {
		const before = await writeCounts(t.handle.db, id);
		const res = await call(disposition, id, qa, { decision: 'released', signature: { username: 'qa', password: 'frost-demo-2026' } });
		expect(res.status).toBe(409);
		const body = (await res.json()) as { code: string; reasons: { code: string }[] };
		expect(body.code).toBe('gates-open');
		expect(body.reasons.map((r) => r.code).sort()).toEqual(['open-deviation', 'unreviewed-item']);
		expect((await call(disposition, id, qa, { decision: 'approved', signature: { password: 'x' } })).status).toBe(400);
		expect((await call(reviewRoute.POST, id, qa, { itemKey: 'audit-trail' })).status).toBe(400);
		expect(await writeCounts(t.handle.db, id)).toEqual(before);
	});

	// 21 CFR 211.192, 11.50; Annex 11, 15; design.md: a checkpoint at release.
	it('marks every item, and once the deviation is closed releases with a signature and a checkpoint', async () => {
		const first = (await (await call(reviewRoute.GET, id, qa)).json()) as ReviewJson;
		for (const i of first.items.filter((x) => x.markable)) expect((await call(reviewRoute.POST, id, qa, { itemKey: i.key, itemHash: i.hash })).status).toBe(201);
		// The seed left the deviation pending QA approval; a second QA person closes it here.
		const r = await closeDeviations(t.handle.db, id, supervisor, qa);
		qa = r.approver;
		const ready = (await (await call(reviewRoute.GET, id, qa)).json()) as ReviewJson;
		expect(ready.release).toEqual({ allowed: true, reasons: [] });
		// An API token has no browser session and cannot sign (11.200(a)).
		expect((await call(disposition, id, { user: qa.user, session: null }, { decision: 'released', signature: { password: 'frost-demo-2026' } })).status).toBe(401);
		const res = await call(disposition, id, qa, { decision: 'released', comment: 'Released (invented).', version: ready.batch.version, signature: { username: 'qa', password: 'frost-demo-2026' } });
		expect(res.status).toBe(201);
		const body = (await res.json()) as { status: string; checkpoint: { size: number } | null };
		expect(body.status).toBe('released');
		expect(body.checkpoint?.size).toBeGreaterThan(0);
		const after = (await (await call(reviewRoute.GET, id, qa)).json()) as ReviewJson;
		expect(after.disposition).toMatchObject({ decision: 'released', signature: { meaning: 'released', printedName: qa.user.name } });
	}, 120_000);
});
