import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { roles, rolesWith, type Role } from '$lib/domain/permissions';
import { databaseKinds } from '../support/databases';
import { publicRoutes, routePermissions } from '../auth/route-permissions';
import { startApp, type App } from './app';
import { handlersOf, invoke, type Handler } from './invoke';
import { FC_RUNS, MARKER, SCRIPT, formBody, hostileString, jsonBody, uploadBody, type BodySpec } from './payloads';
import { routeInputs } from './route-inputs';

/**
 * Hostile input everywhere (issue 9): every load, form action and HTTP handler found by glob
 * under src/routes is called in this process, as each role and signed out, with malformed and
 * hostile payloads (fast-check; FC_RUNS runs per handler). Properties, on PGlite and PostgreSQL:
 *  1. never a 5xx (OWASP ASVS 5.0 V16.5: errors are handled; a crash is not an answer);
 *  2. a refused request writes nothing — every GMP table and the audit trail, apart from the
 *     security log of failed sign-ins and signatures, is unchanged (21 CFR 11.10(a), (e): records
 *     are accurate and complete; Annex 11 §5: data checks);
 *  3. an answer that a browser renders as HTML never carries the hostile script back raw
 *     (OWASP XSS Prevention Cheat Sheet, rule 1: encode output).
 * Failures are collected with fast-check's shrunk counterexample, one per handler.
 */

const modules = import.meta.glob(['/src/routes/**/+page.server.ts', '/src/routes/**/+layout.server.ts', '/src/routes/**/+server.ts']);
const routeKey = (file: string) => file.replace(/^\/src\/routes/, '');
const root = process.cwd();

/** Field and query names the code reads (zod object keys, form.get, searchParams.get), so generators use real names. */
function namesIn(text: string): string[] {
	const out = new Set<string>();
	for (const m of text.matchAll(/(?:^|[\s{,])([A-Za-z_][\w]*)\??:\s*z\./gm)) out.add(m[1]);
	for (const m of text.matchAll(/\.get(?:All)?\('([^']+)'\)/g)) out.add(m[1]);
	return [...out];
}
function sourceFiles(dir: string): string[] {
	return readdirSync(dir, { recursive: true, encoding: 'utf8' })
		.filter((f) => f.endsWith('.ts'))
		.map((f) => join(dir, f));
}
const libNames = [...new Set(sourceFiles(join(root, 'src/lib/server')).flatMap((f) => namesIn(readFileSync(f, 'utf8'))))];
const routeNames = (key: string) => namesIn(readFileSync(join(root, 'src/routes', key), 'utf8'));

function shorten(value: unknown): string {
	return JSON.stringify(value, (_, v) => (typeof v === 'string' && v.length > 120 ? `${v.slice(0, 60)}…(${v.length} chars)` : v instanceof Uint8Array ? `<${v.byteLength} bytes>` : v)).slice(0, 1500);
}

function bodyFor(key: string, h: Handler, names: string[], app: App): fc.Arbitrary<BodySpec> {
	const input = routeInputs[key];
	const base = input.base?.[h.name]?.({ ids: app.ids });
	if (h.method === 'GET') return fc.constant({ kind: 'none' });
	if (h.action !== undefined || h.name.startsWith('actions.')) {
		const strings = base ? Object.fromEntries(Object.entries(base).map(([k, v]) => [k, String(v)])) : undefined;
		return formBody(names, strings);
	}
	if (input.upload) return fc.oneof(uploadBody, jsonBody(names), formBody(names));
	return jsonBody(names, base);
}

function roleArb(key: string, h: Handler): fc.Arbitrary<Role | null> {
	const need = routePermissions[key]?.[h.name];
	const allowed = need === undefined || need === 'signed-in' ? [...roles] : rolesWith(need);
	const others = roles.filter((r) => !allowed.includes(r));
	return fc.oneof(
		{ weight: 6, arbitrary: allowed.length ? fc.constantFrom(...allowed) : fc.constant(null) },
		{ weight: 1, arbitrary: others.length ? fc.constantFrom(...others) : fc.constant(null) },
		{ weight: 1, arbitrary: fc.constant(null) }
	);
}

describe.each(databaseKinds)('hostile input on %s', (kind) => {
	let app: App;
	// Migrating and seeding the demo (argon2id hashes, cycle logs) takes a while on a shared machine.
	beforeAll(async () => {
		app = await startApp(kind);
	}, 600_000);
	afterAll(async () => app?.close());

	test('every route file has a hostile-input declaration, and every declaration a route', async () => {
		const keys = Object.keys(modules).map(routeKey);
		const missing = keys.filter((k) => !(k in routeInputs));
		const stale = Object.keys(routeInputs).filter((k) => !keys.includes(k));
		expect({ missing, stale }).toEqual({ missing: [], stale: [] });
		expect(keys.length).toBeGreaterThanOrEqual(Object.keys(publicRoutes).length + 40);
	});

	test(
		'no route answers a hostile request with a 5xx, writes anything when it refuses, or reflects a script raw',
		{ timeout: 60 * 60_000 },
		async () => {
			const problems: string[] = [];
			let calls = 0;
			let last: Record<string, string> | undefined;
			const statuses = new Map<number, number>();
			for (const [file, load] of Object.entries(modules)) {
				const key = routeKey(file);
				const input = routeInputs[key];
				if (!input) continue;
				const names = [...new Set([...routeNames(key), ...libNames])];
				for (const h of handlersOf(key, (await load()) as Record<string, unknown>)) {
					const paramNames = [...key.matchAll(/\[\.*([^\]=]+)(?:=[^\]]+)?\]/g)].map((m) => m[1]);
					const params = fc.record(
						Object.fromEntries(
							paramNames.map((p) => {
								const known = app.ids[input.params?.[p] ?? ''] ?? [];
								return [p, known.length ? fc.oneof({ weight: 5, arbitrary: fc.constantFrom(...known) }, { weight: 1, arbitrary: hostileString }) : hostileString];
							})
						) as Record<string, fc.Arbitrary<string>>
					);
					const query = fc.array(fc.tuple(fc.oneof(fc.constantFrom(...routeNames(key), 'redirectTo', 'since', 'format'), hostileString), hostileString), { maxLength: 3 });
					const headers = fc.dictionary(fc.constantFrom('x-step-key', 'x-field-key', 'x-filename', 'accept', 'x-forwarded-for', 'origin'), hostileString.map((s) => s.replace(/[^\x20-\x7e]/g, '').slice(0, 3000)), { maxKeys: 3 });
					const property = fc.asyncProperty(roleArb(key, h), params, query, bodyFor(key, h, names, app), headers, fc.ipV4(), async (role, p, q, body, hdrs, address) => {
						calls += 1;
						// A refused call left the fingerprint as it was, so its "after" is the next call's "before".
						const before = last ?? (await app.fingerprint());
						last = undefined;
						const out = await invoke({ key, handler: h, who: role ? app.people.get(role)! : null, params: p, query: q, body, headers: hdrs, address });
						statuses.set(out.status, (statuses.get(out.status) ?? 0) + 1);
						if (out.status >= 500) throw new Error(`answered ${out.status}: ${out.error ?? ''}`);
						if (out.html && (out.html.includes(SCRIPT) || out.html.includes(`<script>${MARKER}`))) throw new Error('reflected the script raw');
						if (out.status >= 400) {
							const after = await app.fingerprint();
							const changed = Object.keys(before).filter((t) => before[t] !== after[t]);
							if (changed.length) throw new Error(`refused with ${out.status} but changed ${changed.join(', ')}`);
							last = after;
						}
					});
					const result = await fc.check(property, { numRuns: FC_RUNS, endOnFailure: true });
					if (result.failed) {
						const cause = result.errorInstance instanceof Error ? result.errorInstance.message : String(result.errorInstance);
						problems.push(`${key} ${h.name}: ${cause}\n    input (role, params, query, body, headers, address): ${shorten(result.counterexample)}`);
					}
				}
			}
			console.log(`[hostile ${kind}] ${calls} calls; statuses ${shorten(Object.fromEntries([...statuses].sort((a, b) => a[0] - b[0])))}`);
			expect(calls).toBeGreaterThan(FC_RUNS * 50);
			expect(problems, problems.join('\n')).toEqual([]);
		}
	);
});
