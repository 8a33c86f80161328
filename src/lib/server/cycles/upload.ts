import { cycleLogMappingSchema, describeMappingIssues, MAX_LOG_BYTES } from '$lib/domain/lyo/mapping';
import { recipeSchema, type Recipe } from '$lib/domain/lyo/recipe';
import { CycleRunError, type LogUpload } from './runs';

export interface UploadForm {
	upload: LogUpload;
	recipe: Recipe | null;
	batchId: string | null;
	stepKey: string | null;
}

// Room for the multipart envelope and the mapping around the largest accepted file.
const ENVELOPE_BYTES = 1024 * 1024;

/**
 * The largest log POST /api/cycles/analyse takes from someone who may only read cycles (REVIEW
 * finding 8): analysing stores nothing, so a reader may preview a short log, but pushing the full
 * MAX_LOG_BYTES through the parser is left to those who may upload (cycle.upload). 4 MB holds
 * about a day at 10 s with a dozen channels (our choice, not from a standard).
 */
export const MAX_READER_LOG_BYTES = 4 * 1024 * 1024;

const megabytes = (n: number) => (n / 1048576).toFixed(1);

function tooLarge(bytes: number, maxFileBytes: number): CycleRunError {
	return new CycleRunError(`the upload is ${megabytes(bytes)} MB; the largest log accepted here is ${maxFileBytes / 1048576} MB`, 413);
}

/**
 * The request body, read with a running count that stops at `maxBytes`: a body without (or with a
 * false) Content-Length cannot make the server buffer more than the cap before refusing it.
 */
async function readCappedBody(request: Request, maxBytes: number, maxFileBytes: number): Promise<Uint8Array<ArrayBuffer>> {
	if (!request.body) return new Uint8Array(0);
	const reader = request.body.getReader();
	const chunks: Uint8Array[] = [];
	let total = 0;
	for (;;) {
		const { done, value } = await reader.read();
		if (done) break;
		total += value.byteLength;
		if (total > maxBytes) {
			await reader.cancel().catch(() => undefined);
			throw tooLarge(total, maxFileBytes);
		}
		chunks.push(value);
	}
	const out = new Uint8Array(total);
	let at = 0;
	for (const c of chunks) {
		out.set(c, at);
		at += c.byteLength;
	}
	return out;
}

/** The largest JSON body of the small cycle routes (a mapping, a leak-test window): our choice. */
export const MAX_JSON_BODY_BYTES = 64 * 1024;

/**
 * A small JSON request body, read under MAX_JSON_BODY_BYTES (REVIEW finding 8): 413 when larger,
 * null when it is not JSON (the route answers 400 with what it expects).
 */
export async function readJsonBody(request: Request, maxBytes = MAX_JSON_BODY_BYTES): Promise<unknown> {
	const declared = Number(request.headers.get('content-length') ?? NaN);
	if (declared > maxBytes) throw new CycleRunError(`the request is ${declared} bytes; at most ${maxBytes} are accepted here`, 413);
	let bytes: Uint8Array;
	try {
		bytes = await readCappedBody(request, maxBytes, maxBytes);
	} catch (e) {
		if (e instanceof CycleRunError) throw new CycleRunError(`the request is over ${maxBytes} bytes`, 413);
		throw e;
	}
	try {
		return JSON.parse(new TextDecoder('utf-8').decode(bytes));
	} catch {
		return null;
	}
}

function parseJsonField(value: FormDataEntryValue | null, name: string): unknown {
	if (typeof value !== 'string' || value.trim() === '') throw new CycleRunError(`"${name}" is missing: send it as a JSON text field.`, 400);
	try {
		return JSON.parse(value);
	} catch {
		throw new CycleRunError(`"${name}" is not valid JSON.`, 400);
	}
}

function optionalText(value: FormDataEntryValue | null): string | null {
	return typeof value === 'string' && value.trim() !== '' ? value.trim() : null;
}

/**
 * Reads the multipart body of a log upload: `file`, `mapping` (JSON), and optionally `recipe`
 * (JSON in the master-record recipe schema), `batch` and `step`. Size is checked from the
 * Content-Length before the body is read, while the body streams in, and again on the file;
 * `maxFileBytes` (default MAX_LOG_BYTES) is the route's cap.
 */
export async function readUploadForm(request: Request, maxFileBytes: number = MAX_LOG_BYTES): Promise<UploadForm> {
	const maxBodyBytes = maxFileBytes + ENVELOPE_BYTES;
	const declared = Number(request.headers.get('content-length') ?? NaN);
	if (declared > maxBodyBytes) throw tooLarge(declared, maxFileBytes);
	let form: FormData;
	const body = await readCappedBody(request, maxBodyBytes, maxFileBytes);
	try {
		form = await new Response(body, { headers: { 'content-type': request.headers.get('content-type') ?? '' } }).formData();
	} catch {
		throw new CycleRunError('Send the log as multipart/form-data with a "file" field.', 400);
	}
	const file = form.get('file');
	if (!(file instanceof File)) throw new CycleRunError('"file" is missing: attach the cycle log as a file field.', 400);
	if (file.size > maxFileBytes) {
		throw new CycleRunError(`the file is ${megabytes(file.size)} MB; the largest log accepted here is ${maxFileBytes / 1048576} MB`, 413);
	}
	const mapping = cycleLogMappingSchema.safeParse(parseJsonField(form.get('mapping'), 'mapping'));
	if (!mapping.success) throw new CycleRunError(`The mapping is not valid: ${describeMappingIssues(mapping.error).join('; ')}`, 400);
	let recipe: Recipe | null = null;
	const recipeText = form.get('recipe');
	if (typeof recipeText === 'string' && recipeText.trim() !== '') {
		const parsed = recipeSchema.safeParse(parseJsonField(recipeText, 'recipe'));
		if (!parsed.success) throw new CycleRunError(`The recipe is not valid: ${describeMappingIssues(parsed.error).join('; ')}`, 400);
		recipe = parsed.data;
	}
	return {
		upload: { fileName: file.name || 'cycle-log.csv', bytes: new Uint8Array(await file.arrayBuffer()), mapping: mapping.data },
		recipe,
		batchId: optionalText(form.get('batch')),
		stepKey: optionalText(form.get('step'))
	};
}

/** The JSON error body of the cycles API: `{ message, line? }` with the refusal's status. */
export function describeRunError(e: unknown): { status: number; body: { message: string; line?: number } } | null {
	if (e instanceof CycleRunError) return { status: e.status, body: e.line === null ? { message: e.message } : { message: e.message, line: e.line } };
	return null;
}
