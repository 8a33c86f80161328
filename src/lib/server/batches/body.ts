import { ExecutionError } from './errors';

/**
 * Request bodies read with a hard cap, so no route buffers more than it will ever accept: the
 * declared content-length is checked first, then the stream is cut off as soon as it passes the
 * cap (chunked bodies declare nothing).
 */

/** Caps of the execution routes, bytes. A step entry is a few kB; 256 kB leaves room for repeated readings. */
export const ENTRY_BODY_MAX_BYTES = 256 * 1024;
export const SMALL_BODY_MAX_BYTES = 16 * 1024;

function tooLarge(maxBytes: number, what: string): ExecutionError {
	const size = maxBytes >= 1048576 ? `${maxBytes / 1048576} MB` : `${maxBytes / 1024} kB`;
	return new ExecutionError(what === 'file' ? 'file-too-large' : 'too-large', `The ${what} is larger than the ${size} allowed here.`);
}

/** The body's bytes, refused (413) as soon as the declared or streamed size passes maxBytes. */
export async function readCapped(request: Request, maxBytes: number, what = 'request'): Promise<Uint8Array> {
	const declared = Number(request.headers.get('content-length') ?? '0');
	if (Number.isFinite(declared) && declared > maxBytes) throw tooLarge(maxBytes, what);
	const reader = request.body?.getReader();
	if (!reader) return new Uint8Array();
	const chunks: Uint8Array[] = [];
	let size = 0;
	for (;;) {
		const { done, value } = await reader.read();
		if (done) break;
		size += value.byteLength;
		if (size > maxBytes) {
			await reader.cancel();
			throw tooLarge(maxBytes, what);
		}
		chunks.push(value);
	}
	const out = new Uint8Array(size);
	let at = 0;
	for (const c of chunks) {
		out.set(c, at);
		at += c.byteLength;
	}
	return out;
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
	const bytes = await readCapped(request, maxBytes);
	const type = request.headers.get('content-type') ?? 'application/x-www-form-urlencoded';
	try {
		return await new Response(new Blob([bytes as Uint8Array<ArrayBuffer>]), { headers: { 'content-type': type } }).formData();
	} catch {
		throw new ExecutionError('invalid-input', 'The form could not be read.');
	}
}
