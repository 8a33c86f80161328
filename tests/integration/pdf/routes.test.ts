import { afterAll, beforeAll, describe, expect, test, vi } from 'vitest';
import { desc, eq } from 'drizzle-orm';
import type { SessionUser } from '$lib/server/auth/types';
import { createTestDatabase, type TestDatabase } from '../support/databases';
import { seedDemo } from '$lib/server/db/seed';
import { auditEvent, batch } from '$lib/server/db/schema';
import { clearSeriesCache } from '$lib/server/cycles/series-store';
import { DEMO_PASSWORD } from '../auth/support/identity';
import { pdfsig, saveTemp, textOf } from './support';

// The route modules import the process database; point it at a test PGlite before they load.
let t: TestDatabase;
vi.mock('$lib/server/db', () => ({
	get database() {
		return t.handle;
	}
}));

const { GET: recordRoute } = await import('../../../src/routes/api/batches/[id]/record.pdf/+server');
const { GET: reportRoute } = await import('../../../src/routes/api/audit/report.pdf/+server');

const person = (role: SessionUser['roles'][number], name: string): SessionUser => ({ id: `u-${role}`, username: role, name, kind: 'person', roles: [role], mustChangePassword: false, locale: 'en' });
const inspector = person('inspector', 'Olu Brannigan');
const admin = person('admin', 'Sam Whitcombe');
const operator = person('operator', 'Tomas Reyvik');

function call<E>(handler: (e: E) => Response | Promise<Response>, path: string, user: SessionUser | null, params: Record<string, string> = {}) {
	const url = new URL(`http://localhost${path}`);
	return handler({ url, params, locals: { user, session: null, requestId: 'test', locale: 'en' }, request: new Request(url) } as unknown as E);
}
async function statusOf(p: Promise<Response> | Response): Promise<number> {
	try {
		return (await p).status;
	} catch (e) {
		return (e as { status: number }).status;
	}
}

beforeAll(async () => {
	t = await createTestDatabase('pglite');
	await seedDemo(t.handle.db, { password: DEMO_PASSWORD });
}, 240_000);
afterAll(async () => {
	clearSeriesCache();
	await t?.dispose();
});

describe('the PDF routes', () => {
	// 21 CFR 11.10(d), (g): only roles that may read the batch get its record; an admin may not.
	test('GET /api/batches/<id>/record.pdf: 403 without batch.read, 401 signed out, 404 for an unknown batch, 200 a signed PDF', async () => {
		const [demo] = await t.handle.db.select({ id: batch.id, number: batch.number }).from(batch).limit(1);
		const path = `/api/batches/${demo.id}/record.pdf`;
		expect(await statusOf(call(recordRoute, path, admin, { id: demo.id }))).toBe(403);
		expect(await statusOf(call(recordRoute, path, null, { id: demo.id }))).toBe(401);
		expect(await statusOf(call(recordRoute, '/api/batches/nope/record.pdf', inspector, { id: 'no-such-batch' }))).toBe(404);
		// A refused or unknown request records no print.
		expect(await t.handle.db.select().from(auditEvent).where(eq(auditEvent.action, 'batch.record.print'))).toHaveLength(0);
		const res = await call(recordRoute, path, inspector, { id: demo.id });
		expect(res.status).toBe(200);
		expect(res.headers.get('content-type')).toBe('application/pdf');
		expect(res.headers.get('content-disposition')).toContain(`batch-record-${demo.number}.pdf`);
		const file = saveTemp(new Uint8Array(await res.arrayBuffer()), 'route-record.pdf');
		expect(textOf(file)).toContain(`Executed batch record ${demo.number}`);
		expect(pdfsig(file)).toContain('Signature is Valid');
		const [print] = await t.handle.db.select().from(auditEvent).where(eq(auditEvent.action, 'batch.record.print'));
		expect(print).toMatchObject({ actorName: inspector.name, entityId: demo.id });
	});

	// 21 CFR 11.10(b), (e): inspectors get the trail of a filter as a readable, signed copy; the export is itself recorded.
	test('GET /api/audit/report.pdf: 403 without audit.export, 400 for a bad filter, 200 with the filter applied and the export audited', async () => {
		expect(await statusOf(call(reportRoute, '/api/audit/report.pdf', operator))).toBe(403);
		expect(await statusOf(call(reportRoute, '/api/audit/report.pdf?cursor=abc', inspector))).toBe(400);
		const res = await call(reportRoute, '/api/audit/report.pdf?action=user.create', inspector);
		expect(res.status).toBe(200);
		expect(res.headers.get('content-type')).toBe('application/pdf');
		const file = saveTemp(new Uint8Array(await res.arrayBuffer()), 'route-report.pdf');
		const text = textOf(file);
		expect(text).toContain('Audit trail report');
		expect(text).toContain('action=user.create');
		// The demo seeds seven invented people (seed/scenario.ts), each a user.create event.
		expect(text).toContain('7 events, oldest first');
		expect(text).toContain('Maren Oakhurst');
		expect(text).not.toContain('batch.step.perform');
		expect(text).toMatch(/Page 1 of \d+/);
		expect(pdfsig(file)).toContain('Signature is Valid');
		const [exported] = await t.handle.db.select().from(auditEvent).where(eq(auditEvent.action, 'audit.export')).orderBy(desc(auditEvent.seq)).limit(1);
		expect(exported.actorName).toBe(inspector.name);
		expect(exported.after).toMatchObject({ format: 'pdf', filter: { action: 'user.create' }, coverage: 'filtered' });
	});
});
