import { ExecutionError } from './errors';
import { describeBytes, parseFormBytes, readBodyCapped } from '../http/body';

// Request bodies of the execution routes, read with a hard cap (../http/body.ts).

/** Caps of the execution routes, bytes. A step entry is a few kB; 256 kB leaves room for repeated readings. */
export const ENTRY_BODY_MAX_BYTES = 256 * 1024;
export const SMALL_BODY_MAX_BYTES = 16 * 1024;

function tooLarge(maxBytes: number, what: string): ExecutionError {
	return new ExecutionError(what === 'file' ? 'file-too-large' : 'too-large', `The ${what} is larger than the ${describeBytes(maxBytes)} allowed here.`);
}

/** The body's bytes, refused (413) as soon as the declared or streamed size passes maxBytes. */
export function readCapped(request: Request, maxBytes: number, what = 'request'): Promise<Uint8Array<ArrayBuffer>> {
	return readBodyCapped(request, maxBytes, () => tooLarge(maxBytes, what));
}

/** A JSON body within the cap; undefined when it is not JSON (the caller's schema then refuses it). */
export async function readCappedJson(request: Request, maxBytes: number): Promise<unknown> {
	const bytes = await readCapped(request, maxBytes);
	try {
		return JSON.parse(new TextDecoder().decode(bytes));
	} catch {
		return undefined;
	}
}

/** A form body (urlencoded or multipart) within the cap, parsed only after the cap held. */
export async function readCappedForm(request: Request, maxBytes: number): Promise<FormData> {
	const form = await parseFormBytes(await readCapped(request, maxBytes), request.headers.get('content-type'));
	if (!form) throw new ExecutionError('invalid-input', 'The form could not be read.');
	return form;
}
