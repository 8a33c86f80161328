import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { isHttpError, isRedirect, type Cookies, type RequestEvent } from '@sveltejs/kit';
import { roles, rolesWith, type Role } from '$lib/domain/permissions';
import type { SessionInfo, SessionUser } from '$lib/server/auth/types';
import { publicRoutes, routePermissions, type Requirement } from './route-permissions';

/**
 * Role × route: every +page.server.ts, +layout.server.ts and +server.ts under src/routes is
 * found by glob (not a hand-picked list), and each exported load, form action and handler is
 * called with a fake request per role and signed out. It must refuse (401 or a redirect to
 * /login) when signed out, answer 403 to every role the permission table does not give its
 * permission, and let every role that has it past the guard (21 CFR 11.10(d), (g); ASVS V8.2.1,
 * V8.3.1; Kit docs, "Loading data: implications for authentication").
 */

// The app's own database singleton, in a throw-away folder; set before any server module loads.
process.env.RIMEBOOK_DATA_DIR = mkdtempSync(join(tmpdir(), 'rimebook-routes-'));
process.env.RIMEBOOK_SEED = 'demo';

const modules = import.meta.glob(['/src/routes/**/+page.server.ts', '/src/routes/**/+layout.server.ts', '/src/routes/**/+server.ts']);
const methods = ['GET', 'POST', 'PUT', 'PATCH', 'DELETE'] as const;

type Outcome = 'signed-out' | 'forbidden' | 'allowed';

function routeKey(file: string): string {
	return file.replace(/^\/src\/routes/, '');
}

function urlPath(key: string): string {
	const dir = key.replace(/\/[^/]+$/, '');
	return dir.replace(/\/\([^)]+\)/g, '').replace(/\[\.*([^\]]+)\]/g, 'no-such-$1') || '/';
}

function paramsOf(key: string): Record<string, string> {
	return Object.fromEntries([...key.matchAll(/\[\.*([^\]=]+)(?:=[^\]]+)?\]/g)].map((m) => [m[1], `no-such-${m[1]}`]));
}

function fakeCookies(): Cookies {
	const jar = new Map<string, string>();
	return {
		get: (name) => jar.get(name),
		getAll: () => [...jar].map(([name, value]) => ({ name, value })),
		set: (name, value) => void jar.set(name, value),
		delete: (name) => void jar.delete(name),
		serialize: (name, value) => `${name}=${value}`
	};
}

function fakeEvent(key: string, method: string, who: { user: SessionUser; session: SessionInfo } | null, action?: string): RequestEvent {
	const path = urlPath(key);
	const url = new URL(`http://localhost${path === '/' ? '/' : path}${action ? `?/${action}` : ''}`);
	const isJson = key.endsWith('/+server.ts');
	const body = method === 'GET' ? undefined : isJson ? '{}' : new FormData();
	const request = new Request(url, { method, body, headers: isJson && method !== 'GET' ? { 'content-type': 'application/json' } : {} });
	return {
		url,
		request,
		params: paramsOf(key),
		route: { id: key.replace(/\/[^/]+$/, '') || '/' },
		cookies: fakeCookies(),
		locals: { requestId: 'route-test', locale: 'en', user: who?.user ?? null, session: who?.session ?? null },
		getClientAddress: () => '198.51.100.7',
		platform: undefined,
		setHeaders: () => undefined,
		isDataRequest: false,
		isSubRequest: false,
		isRemoteRequest: false,
		fetch,
		tracing: { enabled: false, root: undefined as never, current: undefined as never },
		// load-only members
		parent: async () => ({}),
		depends: () => undefined,
		untrack: <T>(fn: () => T) => fn()
	} as unknown as RequestEvent;
}

async function outcomeOf(call: () => unknown): Promise<Outcome> {
	try {
		await call();
		return 'allowed';
	} catch (err) {
		// The guard's redirect always carries redirectTo; a plain /login (sign-out's landing) is not a refusal.
		if (isRedirect(err) && err.location.startsWith('/login?')) return 'signed-out';
		if (isHttpError(err) && err.status === 401) return 'signed-out';
		if (isHttpError(err) && err.status === 403) return 'forbidden';
		// Anything else (a 400/404, another redirect, a crash on the empty input) got past the guard.
		return 'allowed';
	}
}

interface Handler {
	name: string;
	call: (event: RequestEvent) => unknown;
	method: string;
	action?: string;
}

function handlersOf(key: string, mod: Record<string, unknown>): Handler[] {
	const out: Handler[] = [];
	if (typeof mod.load === 'function') out.push({ name: 'load', method: 'GET', call: mod.load as Handler['call'] });
	if (mod.actions && typeof mod.actions === 'object') {
		for (const [name, fn] of Object.entries(mod.actions as Record<string, Handler['call']>)) out.push({ name: `actions.${name}`, method: 'POST', action: name === 'default' ? undefined : name, call: fn });
	}
	if (key.endsWith('/+server.ts')) for (const m of methods) if (typeof mod[m] === 'function') out.push({ name: m, method: m, call: mod[m] as Handler['call'] });
	return out;
}

describe('role × route', () => {
	const people = new Map<Role, { user: SessionUser; session: SessionInfo }>();
	let closeDatabase: () => Promise<void> = async () => {};

	beforeAll(async () => {
		const { database } = await import('$lib/server/db');
		const { prepareDatabase } = await import('$lib/server/startup');
		const { createUserSession, validateSessionToken } = await import('$lib/server/auth/session');
		const { sessionUser } = await import('./support/identity');
		await prepareDatabase(database);
		closeDatabase = () => database.close();
		const demo: Record<Role, string> = { author: 'author', operator: 'operator', supervisor: 'supervisor', qa: 'qa', inspector: 'inspector', admin: 'admin' };
		for (const role of roles) {
			const u = await sessionUser(database.db, demo[role]);
			expect(u.roles).toEqual([role]);
			const { token } = await createUserSession(database.db, u.id, 'password');
			const v = await validateSessionToken(database.db, token);
			if ('end' in v) throw new Error('no session');
			people.set(role, { user: v.user, session: v.session });
		}
	});
	afterAll(async () => closeDatabase());

	test('the glob finds the route tree', () => {
		const keys = Object.keys(modules).map(routeKey);
		expect(keys).toContain('/(app)/+page.server.ts');
		expect(keys).toContain('/api/me/+server.ts');
		expect(keys.length).toBeGreaterThanOrEqual(15);
	});

	test('every route is either public (with a reason) or declared with a permission per export', async () => {
		const problems: string[] = [];
		for (const [file, load] of Object.entries(modules)) {
			const key = routeKey(file);
			const handlers = handlersOf(key, (await load()) as Record<string, unknown>);
			if (key in publicRoutes) continue;
			const declared = routePermissions[key];
			if (!declared) {
				problems.push(`${key}: not declared in tests/integration/auth/route-permissions.ts`);
				continue;
			}
			for (const h of handlers) if (!(h.name in declared)) problems.push(`${key} ${h.name}: export not declared`);
			for (const name of Object.keys(declared)) if (!handlers.some((h) => h.name === name)) problems.push(`${key} ${name}: declared but not exported`);
		}
		for (const key of [...Object.keys(routePermissions), ...Object.keys(publicRoutes)]) {
			if (!Object.keys(modules).some((f) => routeKey(f) === key)) problems.push(`${key}: listed but no such file`);
		}
		expect(problems).toEqual([]);
	});

	test('each guarded export refuses the signed-out visitor and exactly the roles without its permission', { timeout: 120_000 }, async () => {
		const mismatches: string[] = [];
		let checked = 0;
		for (const [file, load] of Object.entries(modules)) {
			const key = routeKey(file);
			const declared = routePermissions[key];
			if (!declared) continue;
			for (const h of handlersOf(key, (await load()) as Record<string, unknown>)) {
				const need: Requirement | undefined = declared[h.name];
				if (!need) continue;
				const anonymous = await outcomeOf(() => h.call(fakeEvent(key, h.method, null, h.action)));
				if (anonymous !== 'signed-out') mismatches.push(`${key} ${h.name} signed out: ${anonymous}`);
				for (const role of roles) {
					const expected: Outcome = need === 'signed-in' || rolesWith(need).includes(role) ? 'allowed' : 'forbidden';
					const got = await outcomeOf(() => h.call(fakeEvent(key, h.method, people.get(role)!, h.action)));
					checked += 1;
					if (got !== expected) mismatches.push(`${key} ${h.name} as ${role}: expected ${expected}, got ${got}`);
				}
			}
		}
		expect(mismatches).toEqual([]);
		expect(checked).toBeGreaterThan(100);
	});

	test('public routes answer a signed-out visitor without asking for sign-in', async () => {
		const refused: string[] = [];
		for (const [file, load] of Object.entries(modules)) {
			const key = routeKey(file);
			if (!(key in publicRoutes)) continue;
			for (const h of handlersOf(key, (await load()) as Record<string, unknown>)) {
				const got = await outcomeOf(() => h.call(fakeEvent(key, h.method, null, h.action)));
				if (got !== 'allowed') refused.push(`${key} ${h.name}: ${got}`);
			}
		}
		expect(refused).toEqual([]);
	});
});
