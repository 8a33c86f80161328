import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { Database } from '../db/client';
import { AuthError } from '../auth/errors';
import { isMasterError } from '../masters/errors';
import type { SignatureCredentials } from '../signatures/ceremony';
import { isExecutionError } from './errors';
import { buildBatchView, loadBatchRecords } from './query';

/** The signature part of an API request: `{ password, username? }` (11.200(a)(1)). */
export const apiSignatureSchema = z.strictObject({ username: z.string().max(100).optional(), password: z.string().min(1).max(1000) });

/** Most fields one step takes in one request, and the longest JSON one value may be (a 5000-character text, 100 readings). */
export const MAX_ENTRY_FIELDS = 200;
export const MAX_VALUE_JSON_CHARS = 20_000;

/**
 * The `values` of an entry: field key → value as typed, bounded before the services read them
 * (keys are template keys, KEY_PATTERN: at most 48 characters).
 */
export const entryValuesSchema = z
	.record(z.string().max(48), z.unknown())
	.refine((v) => Object.keys(v).length <= MAX_ENTRY_FIELDS, { message: `at most ${MAX_ENTRY_FIELDS} fields` })
	.refine((v) => Object.values(v).every((x) => x === undefined || (JSON.stringify(x)?.length ?? 0) <= MAX_VALUE_JSON_CHARS), { message: `a value is at most ${MAX_VALUE_JSON_CHARS} characters as JSON` });

export const entryBodySchema = z.strictObject({
	values: entryValuesSchema,
	comment: z.string().max(2000).optional(),
	reasonCode: z.string().max(40).optional(),
	workedAt: z.string().max(40).optional(),
	version: z.number().int().positive().optional(),
	signature: apiSignatureSchema
});

export const verifyBodySchema = z.strictObject({ version: z.number().int().positive().optional(), signature: apiSignatureSchema });

export function credentialsFrom(sig: z.infer<typeof apiSignatureSchema>): SignatureCredentials {
	return { method: 'password', username: sig.username, password: sig.password };
}

/** Plain zod issues as the API's `{ message, issues }`. */
export function invalidBody(error: z.ZodError): Response {
	return json({ message: 'The request is not in the expected form.', code: 'invalid-input', issues: error.issues.map((i) => ({ path: i.path.join('.'), message: i.message })) }, { status: 400 });
}

/**
 * An expected refusal as JSON with its status. A 409 carries the fresh state of the batch, so a
 * client can show what changed without another round trip.
 */
export async function refusal(db: Database, err: unknown, batchId?: string): Promise<Response> {
	if (isExecutionError(err)) {
		const body: Record<string, unknown> = { message: err.message, code: err.code, issues: err.issues };
		if (err.status === 409 && batchId) {
			const records = await loadBatchRecords(db, batchId);
			if (records) body.state = await buildBatchView(db, records);
		}
		return json(body, { status: err.status });
	}
	if (err instanceof AuthError) return json({ message: err.message, code: err.code }, { status: err.status });
	if (isMasterError(err)) return json({ message: err.message, code: err.code, issues: err.issues }, { status: err.status });
	throw err;
}
