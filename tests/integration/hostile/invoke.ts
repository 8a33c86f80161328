import { isActionFailure, isHttpError, isRedirect, type Cookies, type RequestEvent } from '@sveltejs/kit';
import type { SessionInfo, SessionUser } from '$lib/server/auth/types';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { refusalOfInput } from '$lib/server/http/input';
import { toRequest, type BodySpec } from './payloads';

/**
 * Whether hooks.server.ts runs the shared input guard (src/lib/server/http/input.ts) before every
 * route. Only then does this in-process call apply it too: the test never credits a guard the
 * real server does not run.
 */
export const hooksRefuseMalformedInput = /\brefuseMalformedInput\b/.test(readFileSync(join(process.cwd(), 'src/hooks.server.ts'), 'utf8'));

/** One exported load, form action or HTTP handler of a route module. */
export interface Handler {
	name: string;
	method: string;
	action?: string;
	call: (event: RequestEvent) => unknown;
}

const methods = ['GET', 'POST', 'PUT', 'PATCH', 'DELETE'] as const;

export function handlersOf(key: string, mod: Record<string, unknown>): Handler[] {
	const out: Handler[] = [];
	if (typeof mod.load === 'function') out.push({ name: 'load', method: 'GET', call: mod.load as Handler['call'] });
	if (mod.actions && typeof mod.actions === 'object') {
		for (const [name, fn] of Object.entries(mod.actions as Record<string, Handler['call']>)) out.push({ name: `actions.${name}`, method: 'POST', action: name === 'default' ? undefined : name, call: fn });
	}
	if (key.endsWith('/+server.ts')) for (const m of methods) if (typeof mod[m] === 'function') out.push({ name: m, method: m, call: mod[m] as Handler['call'] });
	return out;
}

export interface Outcome {
	/** The status SvelteKit would answer with: a thrown non-HTTP error is a 500. */
	status: number;
	/** The answer's text when it is not JSON or a plain data object (what a browser would render). */
	html?: string;
	error?: string;
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

/** A path segment as a client could send it: percent-encoded well-formed text. */
function segment(value: string): string {
	return encodeURIComponent(value.toWellFormed());
}

export interface Call {
	key: string;
	handler: Handler;
	who: { user: SessionUser; session: SessionInfo } | null;
	params: Record<string, string>;
	query: [string, string][];
	body: BodySpec;
	headers: Record<string, string>;
	address: string;
}

/** Calls the handler as SvelteKit would (adapter-node → Kit → route) and maps the result to a status. */
export async function invoke(c: Call): Promise<Outcome> {
	const routeId = c.key.replace(/\/[^/]+$/, '') || '/';
	const path = routeId.replace(/\/\([^)]+\)/g, '').replace(/\[\.*([^\]=]+)(?:=[^\]]+)?\]/g, (_, name: string) => segment(c.params[name] ?? '')) || '/';
	const url = new URL(`http://localhost${path}`);
	for (const [k, v] of c.query) url.searchParams.append(k.toWellFormed(), v.toWellFormed());
	if (c.handler.action) url.search = `?/${c.handler.action}${url.search ? '&' + url.search.slice(1) : ''}`;
	// Kit decodes path parameters; what a handler sees is well-formed text (NUL included).
	const params = Object.fromEntries(Object.entries(c.params).map(([k, v]) => [k, v.toWellFormed()]));
	const request = toRequest(url, c.handler.method, c.body, c.headers);
	const event = {
		url,
		request,
		params,
		route: { id: routeId },
		cookies: fakeCookies(),
		locals: { requestId: 'hostile-test', locale: 'en', user: c.who?.user ?? null, session: c.who?.session ?? null },
		getClientAddress: () => c.address,
		platform: undefined,
		setHeaders: () => undefined,
		isDataRequest: false,
		isSubRequest: false,
		isRemoteRequest: false,
		fetch,
		tracing: { enabled: false, root: undefined as never, current: undefined as never },
		parent: async () => ({}),
		depends: () => undefined,
		untrack: <T>(fn: () => T) => fn()
	} as unknown as RequestEvent;
	try {
		if (hooksRefuseMalformedInput) {
			const refused = await refusalOfInput(event);
			if (refused) return { status: refused.status };
		}
		const result = await c.handler.call(event);
		if (result instanceof Response) {
			const type = result.headers.get('content-type') ?? '';
			const text = await result.text();
			return { status: result.status, html: type.includes('json') ? undefined : text };
		}
		if (isActionFailure(result)) return { status: result.status };
		return { status: 200 };
	} catch (err) {
		if (isRedirect(err)) return { status: err.status };
		if (isHttpError(err)) return { status: err.status };
		return { status: 500, error: describeError(err) };
	}
}

/** The error and its cause (drizzle wraps the driver's error), short enough for a report. */
function describeError(err: unknown): string {
	if (!(err instanceof Error)) return String(err).slice(0, 300);
	const cause = err.cause instanceof Error ? ` — cause: ${err.cause.message.slice(0, 200)}` : '';
	return `${err.name}: ${err.message.slice(0, 160)}${cause}`;
}
