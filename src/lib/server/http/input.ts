import { json, type Handle, type RequestEvent } from '@sveltejs/kit';

/**
 * Input no route can take, refused with a 4xx before any route runs (OWASP ASVS 5.0 V1.2/V2.2:
 * validate input at a trusted layer; issue 9 "never a 5xx"):
 *  - U+0000 anywhere in the path, the query, a form field or a JSON body: PostgreSQL text and
 *    jsonb cannot hold it ("invalid byte sequence for encoding UTF8: 0x00"), so every query with
 *    it would fail as a 500;
 *  - text that is not well-formed Unicode (a lone surrogate, "\ud800" in JSON): the drivers would
 *    store U+FFFD instead, so the stored record would differ from what was signed (21 CFR 11.70);
 *  - a form POST to a page whose body is not a readable form (multipart without a boundary,
 *    text/plain): SvelteKit lets these content types through to actions, and `formData()`
 *    then throws — a 500 in every action that reads its form directly.
 * Uploads (any other content type) are bytes and are not looked into here.
 */
export interface InputRefusal {
	status: 400 | 415;
	message: string;
}

const FORM_TYPES = ['application/x-www-form-urlencoded', 'multipart/form-data', 'text/plain'];


function textProblem(value: string): string | null {
	if (value.includes('\u0000')) return 'Text may not contain the NUL character (U+0000).';
	if (!value.isWellFormed()) return 'Text must be well-formed Unicode (no lone surrogates).';
	return null;
}

/** The first bad string among a JSON value's keys and strings (escapes decoded: "\\u0000", lone "\\ud800", RFC 8259 §8.2). */
function jsonProblem(value: unknown, depth = 0): string | null {
	if (typeof value === 'string') return textProblem(value);
	if (value === null || typeof value !== 'object') return null;
	if (depth > 64) return 'The JSON is nested too deeply.';
	for (const [k, v] of Object.entries(value)) {
		const problem = textProblem(k) ?? jsonProblem(v, depth + 1);
		if (problem) return problem;
	}
	return null;
}

function baseType(request: Request): string {
	return (request.headers.get('content-type') ?? '').split(';')[0].trim().toLowerCase();
}

/** Whether a POST goes to a page's form action (not to a +server.ts endpoint). */
export function isFormActionPost(event: Pick<RequestEvent, 'request' | 'url'>): boolean {
	return event.request.method === 'POST' && !event.url.pathname.startsWith('/api/') && event.url.pathname !== '/logout' && FORM_TYPES.includes(baseType(event.request));
}

/**
 * The largest JSON body any route accepts (the master import, 2 MB; the rest far less). A bigger
 * one is left unread here: the route's own capped reader refuses it with 413 without buffering
 * it, and this guard must not buffer it either (ASVS V2.2: no unbounded input).
 */
const INSPECTED_JSON_MAX_BYTES = 4 * 1024 * 1024;

/**
 * A copy of a JSON body within INSPECTED_JSON_MAX_BYTES, or null when it is larger. Not
 * readBodyCapped: a tee branch's cancel() settles only once the other branch (the route's) is
 * cancelled too, so it must not be awaited here.
 */
async function readInspectableJson(request: Request): Promise<string | null> {
	const declared = Number(request.headers.get('content-length') ?? NaN);
	if (Number.isFinite(declared) && declared > INSPECTED_JSON_MAX_BYTES) return null;
	const reader = request.clone().body?.getReader();
	if (!reader) return '';
	const decoder = new TextDecoder();
	let text = '';
	let size = 0;
	for (;;) {
		const { done, value } = await reader.read();
		if (done) return text + decoder.decode();
		size += value.byteLength;
		if (size > INSPECTED_JSON_MAX_BYTES) {
			void reader.cancel().catch(() => {});
			return null;
		}
		text += decoder.decode(value, { stream: true });
	}
}

/** The refusal a request earns before routing, or null. Reads a clone of the body; the route still gets the original. */
export async function refusalOfInput(event: Pick<RequestEvent, 'request' | 'url' | 'params'>): Promise<InputRefusal | null> {
	const { request, url } = event;
	for (const v of [...Object.values(event.params ?? {}), ...url.searchParams.keys(), ...url.searchParams.values()]) {
		const problem = v === undefined ? null : textProblem(v);
		if (problem) return { status: 400, message: problem };
	}
	if (request.method === 'GET' || request.method === 'HEAD' || !request.body) return null;
	const type = baseType(request);
	if (isFormActionPost(event)) {
		if (type === 'text/plain') return { status: 415, message: 'Forms are sent as application/x-www-form-urlencoded or multipart/form-data.' };
		let form: FormData;
		try {
			form = await request.clone().formData();
		} catch {
			return { status: 400, message: 'The form could not be read.' };
		}
		for (const [, v] of form) {
			const problem = typeof v === 'string' ? textProblem(v) : textProblem(v.name);
			if (problem) return { status: 400, message: problem };
		}
		return null;
	}
	if (type === 'application/json' || type.endsWith('+json')) {
		let parsed: unknown;
		try {
			const text = await readInspectableJson(request);
			if (text === null) return null; // larger than any route takes: the route's reader answers 413
			parsed = JSON.parse(text);
		} catch {
			return null; // not JSON, or larger than any route takes: the route's own reader refuses it
		}
		const problem = jsonProblem(parsed);
		if (problem) return { status: 400, message: problem };
	}
	return null;
}

/** The hook: `sequence(…, refuseMalformedInput, …)` in hooks.server.ts, after authentication. */
export const refuseMalformedInput: Handle = async ({ event, resolve }) => {
	const refusal = await refusalOfInput(event);
	if (!refusal) return resolve(event);
	if (event.url.pathname.startsWith('/api/') || !isFormActionPost(event)) return json({ message: refusal.message, code: 'invalid-input' }, { status: refusal.status });
	return new Response(refusal.message, { status: refusal.status, headers: { 'content-type': 'text/plain; charset=utf-8' } });
};
