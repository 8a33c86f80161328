import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { spawnSync } from 'node:child_process';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { fromHex, leafHash, verifyConsistency, verifyInclusion } from '$lib/domain/merkle';
import { createTestDatabase, type TestDatabase } from '../support/databases';
import { appendSynthetic } from './support';
import type { SessionUser } from '$lib/server/auth/types';

// The route modules import the process database; point it at a test PGlite before they load.
let t: TestDatabase;
vi.mock('$lib/server/db', () => ({
	get database() {
		return t.handle;
	}
}));

const { GET: list } = await import('../../../src/routes/api/audit/+server');
const { GET: verifyRoute } = await import('../../../src/routes/api/audit/verify/+server');
const { GET: proofRoute } = await import('../../../src/routes/api/audit/proof/[seq]/+server');
const { GET: checkpointsRoute } = await import('../../../src/routes/api/audit/checkpoints/+server');
const { GET: consistencyRoute } = await import('../../../src/routes/api/audit/consistency/+server');
const { GET: keyRoute } = await import('../../../src/routes/api/audit/public-key/+server');
const { GET: exportRoute } = await import('../../../src/routes/api/audit/export/+server');
const { load: trailPageLoad } = await import('../../../src/routes/(app)/audit/+page.server');
const { load: verifyPageLoad } = await import('../../../src/routes/(app)/audit/verify/+page.server');
const { createCheckpoint, ensureSigningKey, sha256 } = await import('$lib/server/audit/checkpoint');
const { isCheckpointScheduleRunning, stopCheckpointSchedule } = await import('$lib/server/audit/schedule');
const { sql } = await import('drizzle-orm');
const { rowsOf } = await import('$lib/server/audit/ledger');

const inspector: SessionUser = { id: 'u-insp', username: 'inspector', name: 'Olu Brannigan', kind: 'person', roles: ['inspector'], mustChangePassword: false, locale: 'en' };
const operator: SessionUser = { ...inspector, id: 'u-op', username: 'operator', roles: ['operator'] };
const qa: SessionUser = { ...inspector, id: 'u-qa', username: 'qa', roles: ['qa'] };

function call<E>(handler: (e: E) => Response | Promise<Response>, path: string, user: SessionUser | null, params: Record<string, string> = {}) {
	const url = new URL(`http://localhost${path}`);
	return handler({ url, params, locals: { user, session: null, requestId: 'test', locale: 'en' }, request: new Request(url) } as unknown as E);
}
async function status(p: Promise<Response> | Response): Promise<number> {
	try {
		return (await p).status;
	} catch (e) {
		return (e as { status: number }).status;
	}
}

/** Page loads take the same event shape; their result is plain data. */
function loadPage(load: unknown, path: string, user: SessionUser) {
	return call(load as (e: unknown) => Promise<Response>, path, user) as unknown as Promise<Record<string, unknown>>;
}
async function countRows(table: 'audit_signing_key' | 'audit_event'): Promise<number> {
	return rowsOf<{ n: number }>(await t.handle.db.execute(sql.raw(`select count(*)::int as n from ${table}`)))[0].n;
}

// Taken before any key exists: reads must not make one (finding 16).
let keyBeforeAny: { current: unknown; keys: unknown[] };
let keysAfterReads = -1;

beforeAll(async () => {
	t = await createTestDatabase('pglite');
	keyBeforeAny = await (await call(keyRoute, '/api/audit/public-key', inspector)).json();
	await loadPage(verifyPageLoad, '/audit/verify', qa);
	keysAfterReads = await countRows('audit_signing_key');
	// Start-up (hooks init) makes the key as event 1; the synthetic events are 2..41.
	await ensureSigningKey(t.handle.db);
	await appendSynthetic(t.handle.db, 40);
	await createCheckpoint(t.handle.db);
});
afterAll(async () => {
	stopCheckpointSchedule(t.handle.db);
	await t?.dispose();
});

describe('audit API (21 CFR 11.10(d): access limited to authorised roles)', () => {
	it('answers 401 signed out and 403 for a role without audit.read', async () => {
		expect(await status(call(list, '/api/audit', null))).toBe(401);
		expect(await status(call(verifyRoute, '/api/audit/verify', operator))).toBe(403);
		expect(await status(call(exportRoute, '/api/audit/export', operator))).toBe(403);
	});

	it('pages newest first with a cursor and filters by entity, batch and free text', async () => {
		const first = await (await call(list, '/api/audit?limit=15', inspector)).json();
		expect(first.events.map((e: { seq: number }) => e.seq)).toEqual(Array.from({ length: 15 }, (_, i) => 41 - i));
		const second = await (await call(list, `/api/audit?limit=15&cursor=${first.nextCursor}`, inspector)).json();
		expect(second.events[0].seq).toBe(26);
		const byEntity = await (await call(list, '/api/audit?entity=equipment:ent-0&limit=100', inspector)).json();
		expect(byEntity.events.length).toBeGreaterThan(0);
		expect(byEntity.events.every((e: { entityType: string; entityId: string }) => e.entityType === 'equipment' && e.entityId === 'ent-0')).toBe(true);
		const byBatch = await (await call(list, '/api/audit?batch=batch-0&limit=100', inspector)).json();
		expect(byBatch.events.every((e: { batchId: string }) => e.batchId === 'batch-0')).toBe(true);
		const byText = await (await call(list, '/api/audit?q=Invented%20reason&limit=100', inspector)).json();
		expect(byText.events.length).toBe(8); // synthetic events j % 5 === 0 for j < 40
		expect(await status(call(list, '/api/audit?limit=0', inspector))).toBe(400);
	});

	it('verifies, lists checkpoints, serves the public key and an inclusion proof that checks (RFC 9162 2.1.3.2)', async () => {
		const report = await (await call(verifyRoute, '/api/audit/verify', inspector)).json();
		expect(report).toMatchObject({ ok: true, count: 41, firstBreak: null });
		const { checkpoints } = await (await call(checkpointsRoute, '/api/audit/checkpoints', inspector)).json();
		expect(checkpoints[0].size).toBe(41);
		const key = await (await call(keyRoute, '/api/audit/public-key', inspector)).json();
		expect(key.current.publicKey).toContain('BEGIN PUBLIC KEY');
		expect(JSON.stringify(key)).not.toContain('PRIVATE');
		const proof = await (await call(proofRoute, '/api/audit/proof/17', inspector, { seq: '17' })).json();
		expect(verifyInclusion(sha256, 16, 41, leafHash(sha256, fromHex(proof.hash)), proof.path.map(fromHex), fromHex(proof.checkpoint.root))).toBe(true);
		expect(await status(call(proofRoute, '/api/audit/proof/42', inspector, { seq: '42' }))).toBe(409);
	});

	it('proves a later checkpoint extends an earlier one (RFC 9162 2.1.4.2)', async () => {
		await appendSynthetic(t.handle.db, 9);
		const later = await createCheckpoint(t.handle.db);
		const c = await (await call(consistencyRoute, `/api/audit/consistency?from=41&to=${later!.size}`, inspector)).json();
		expect(verifyConsistency(sha256, 41, later!.size, fromHex(c.from.root), fromHex(c.to.root), c.path.map(fromHex))).toBe(true);
	});
});

describe('site signing key and the verify page (21 CFR 11.10(d), (e))', () => {
	it('finding 16: a read never makes the key; ensureSigningKey makes it once, audited, without the private key', async () => {
		expect(keyBeforeAny).toEqual({ current: null, keys: [] });
		expect(keysAfterReads).toBe(0);
		expect(await countRows('audit_signing_key')).toBe(1);
		const [first] = rowsOf<{ canonical: string }>(await t.handle.db.execute(sql`select canonical from audit_event where seq = 1`));
		const event = JSON.parse(first.canonical);
		expect(event).toMatchObject({ action: 'audit.signing-key.create', entityType: 'audit-signing-key', actorId: null });
		expect(first.canonical).not.toContain('PRIVATE KEY');
		const before = await countRows('audit_event');
		const again = await ensureSigningKey(t.handle.db);
		expect(again.created).toBe(false);
		expect(again.id).toBe(event.after.keyId);
		expect(await countRows('audit_event')).toBe(before);
		expect(JSON.stringify(again)).not.toContain('PRIVATE');
	});

	it('finding 7: the verify page offers "sign a checkpoint" only to holders of audit.checkpoint, and shows the public key only', async () => {
		const asInspector = await loadPage(verifyPageLoad, '/audit/verify', inspector);
		const asQa = await loadPage(verifyPageLoad, '/audit/verify', qa);
		expect(asInspector.canCheckpoint).toBe(false); // permissions.ts: audit.checkpoint is qa and admin
		expect(asQa.canCheckpoint).toBe(true);
		expect(JSON.stringify(asQa.key)).toContain('BEGIN PUBLIC KEY');
		expect(JSON.stringify(asQa)).not.toContain('PRIVATE');
	});

	it('finding 33: loads and GETs do not start the checkpoint schedule (hooks init does)', async () => {
		stopCheckpointSchedule(t.handle.db);
		await call(list, '/api/audit', inspector);
		await call(checkpointsRoute, '/api/audit/checkpoints', inspector);
		await loadPage(trailPageLoad, '/audit', inspector);
		await loadPage(verifyPageLoad, '/audit/verify', inspector);
		expect(isCheckpointScheduleRunning(t.handle.db)).toBe(false);
	});
});

describe('export and the offline verifier (21 CFR 11.10(b): accurate, complete copies)', () => {
	const dir = mkdtempSync(join(tmpdir(), 'rimebook-export-'));
	afterAll(() => rmSync(dir, { recursive: true, force: true }));
	const verifyFile = (file: string) => spawnSync('npx', ['tsx', 'scripts/audit-verify-export.ts', file], { encoding: 'utf8' });

	it('exports the complete trail as JSONL that verifies offline, and audits the export itself', async () => {
		const res = await call(exportRoute, '/api/audit/export?format=jsonl', inspector);
		const text = await res.text();
		const lines = text.trim().split('\n').map((l) => JSON.parse(l));
		expect(lines[0]).toMatchObject({ type: 'rimebook.audit-export', coverage: 'complete' });
		const events = lines.filter((l) => l.type === 'event');
		expect(events.at(-1).event).toMatchObject({ action: 'audit.export', actorName: 'Olu Brannigan' });
		expect(lines[0].checkpoint.size).toBe(events.length);
		const file = join(dir, 'complete.jsonl');
		writeFileSync(file, text);
		const ok = verifyFile(file);
		expect(ok.status, ok.stderr).toBe(0);
		// One changed character in one event: the verifier names it.
		const bent = text.replace('"n":12,', '"n":13,');
		expect(bent).not.toBe(text);
		const seq = events.find((e) => e.event.after?.n === 12 || e.event.before?.n === 12).seq;
		writeFileSync(join(dir, 'bent.jsonl'), bent);
		const bad = verifyFile(join(dir, 'bent.jsonl'));
		expect(bad.status).toBe(1);
		expect(bad.stderr).toContain(`first break at seq ${seq}: changed`);
		// A removed line.
		const cut = text.split('\n').filter((l, i) => i !== 5).join('\n');
		writeFileSync(join(dir, 'cut.jsonl'), cut);
		expect(verifyFile(join(dir, 'cut.jsonl')).status).toBe(1);
	}, 60_000);

	it('exports a filtered subset with inclusion proofs (JSONL and CSV) that verify offline', async () => {
		for (const format of ['jsonl', 'csv']) {
			const res = await call(exportRoute, `/api/audit/export?format=${format}&entity=equipment`, inspector);
			const text = await res.text();
			const file = join(dir, `filtered.${format}`);
			writeFileSync(file, text);
			const out = verifyFile(file);
			expect(out.status, out.stderr + out.stdout).toBe(0);
			expect(out.stdout).toContain('in the signed checkpoint');
			// An edited payload, and (CSV) an edited readable column: both are caught.
			const forgeries = format === 'jsonl' ? [text.replace('"entityId":"ent-0"', '"entityId":"ent-9"')] : [text.replace('""entityId"":""ent-0""', '""entityId"":""ent-9""'), text.replace(',ent-0,', ',ent-9,')];
			for (const forged of forgeries) {
				expect(forged).not.toBe(text);
				writeFileSync(join(dir, `forged.${format}`), forged);
				const res2 = verifyFile(join(dir, `forged.${format}`));
				expect(res2.status).toBe(1);
				expect(res2.stderr).toMatch(/first break at seq \d+: changed/);
			}
		}
	}, 90_000);
});
