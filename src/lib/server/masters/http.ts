import { fail, json, type ActionFailure } from '@sveltejs/kit';
import { isAuthError } from '../auth/errors';
import type { TemplateIssue } from '$lib/domain/template';
import { isMasterError, MasterError } from './errors';
import { messagesFor, type Locale } from '$lib/i18n';
import { parseFormBytes, readBodyCapped as readCappedBytes } from '../http/body';

export interface MasterFailure {
	code: string;
	message: string;
	issues: TemplateIssue[];
	/** What the SignDialog shows when the action behind a signature is refused (credentials.ts, signatureFailure). */
	signError: string;
}

/**
 * A form action's answer to an expected refusal: its status, code, message and every issue.
 * `signError` is the catalogue's words for a master code in the person's language (the
 * SignDialog looks up only auth codes itself and shows signError otherwise); the server's own
 * English stays in `message` for the detail.
 */
export function masterFailure(err: unknown, locale: Locale = 'en'): ActionFailure<MasterFailure> {
	if (isMasterError(err)) {
		const words = (messagesFor(locale).masters.errors as Record<string, string | undefined>)[err.code];
		return fail(err.status, { code: err.code, message: err.message, issues: err.issues, signError: words ?? err.message });
	}
	if (isAuthError(err)) return fail(err.status, { code: err.code, message: err.message, issues: [], signError: err.message });
	throw err;
}

/** An API route's answer to an expected refusal: `{ message, issues }` with the status (style.md). */
export function masterJsonError(err: unknown): Response {
	if (isMasterError(err)) return json({ message: err.message, code: err.code, issues: err.issues }, { status: err.status });
	if (isAuthError(err)) return json({ message: err.message, code: err.code, issues: [] }, { status: err.status });
	throw err;
}

function tooLarge(maxBytes: number): MasterError {
	return new MasterError('too-large', `The request is larger than the ${(maxBytes / 1_000_000).toFixed(1)} MB allowed here; nothing was saved.`);
}

/** A request body read within `maxBytes` before anything parses it (../http/body.ts); MasterError 'too-large' (413). */
export function readBodyCapped(request: Request, maxBytes: number): Promise<Uint8Array<ArrayBuffer>> {
	return readCappedBytes(request, maxBytes, () => tooLarge(maxBytes));
}

/** A form body (multipart or urlencoded) parsed only after it was read within the cap. */
export async function readFormCapped(request: Request, maxBytes: number): Promise<FormData> {
	const form = await parseFormBytes(await readBodyCapped(request, maxBytes), request.headers.get('content-type'));
	if (!form) throw new MasterError('invalid', 'The form could not be read.');
	return form;
}

/**
 * The named fields of a form as strings (each at most `maxChars`), to parse and to show again
 * when refused: a File or an unknown name is dropped, so the answer is always serialisable and
 * echoes nothing the form did not ask for.
 */
export function stringFields(form: FormData, names: readonly string[], maxChars = 400): Record<string, string> {
	const out: Record<string, string> = {};
	for (const name of names) {
		const v = form.get(name);
		if (typeof v === 'string') out[name] = v.slice(0, maxChars);
	}
	return out;
}
