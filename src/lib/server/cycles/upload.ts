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
const MAX_BODY_BYTES = MAX_LOG_BYTES + 1024 * 1024;

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
 * Content-Length before the body is read, and again on the file.
 */
export async function readUploadForm(request: Request): Promise<UploadForm> {
	const declared = Number(request.headers.get('content-length') ?? NaN);
	if (declared > MAX_BODY_BYTES) {
		throw new CycleRunError(`the upload is ${(declared / 1048576).toFixed(1)} MB; the largest log accepted is ${MAX_LOG_BYTES / 1048576} MB`, 413);
	}
	let form: FormData;
	try {
		form = await request.formData();
	} catch {
		throw new CycleRunError('Send the log as multipart/form-data with a "file" field.', 400);
	}
	const file = form.get('file');
	if (!(file instanceof File)) throw new CycleRunError('"file" is missing: attach the cycle log as a file field.', 400);
	if (file.size > MAX_LOG_BYTES) {
		throw new CycleRunError(`the file is ${(file.size / 1048576).toFixed(1)} MB; the largest log accepted is ${MAX_LOG_BYTES / 1048576} MB`, 413);
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
