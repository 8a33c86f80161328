import { fail, json, type ActionFailure } from '@sveltejs/kit';
import { z } from 'zod';
import { isAuthError } from '../auth/errors';
import { describeBytes, parseFormBytes, readBodyCapped } from '../http/body';
import { deviationClassifications, deviationStatuses, type DeviationTransition } from '$lib/domain/deviation-lifecycle';
import { messagesFor, type Locale } from '$lib/i18n';
import { DeviationError, isDeviationError } from './errors';
import type { DeviationFilters } from './queries';

/** Caps of the deviation routes: a deviation's texts are a few kB; 64 kB leaves room, no more. */
export const DEVIATION_BODY_MAX_BYTES = 64 * 1024;

const longText = z.string().max(10_000);
const classification = z.enum(deviationClassifications);

export const raiseBodySchema = z.strictObject({
	batchId: z.string().min(1).max(100),
	stepKey: z.string().max(48).nullish(),
	title: z.string().trim().min(1).max(200),
	description: z.string().trim().min(1).max(10_000),
	classification: classification.nullish(),
	immediateAction: longText.nullish()
});

export const fieldsSchema = z.strictObject({
	title: z.string().trim().min(1).max(200).optional(),
	description: z.string().trim().min(1).max(10_000).optional(),
	classification: classification.nullable().optional(),
	immediateAction: longText.nullable().optional(),
	investigation: longText.nullable().optional(),
	rootCause: longText.nullable().optional(),
	impact: longText.nullable().optional(),
	capaRefs: z.array(z.string().trim().min(1).max(60)).max(50).optional()
});

export const editBodySchema = z.strictObject({ version: z.number().int().positive(), fields: fieldsSchema });

export const transitionNames = ['start-investigation', 'submit', 'send-back', 'close', 'cancel'] as const satisfies readonly DeviationTransition[];

export const transitionBodySchema = z.strictObject({
	action: z.enum(transitionNames),
	version: z.number().int().positive(),
	reason: z.string().max(2000).nullish(),
	closureComment: z.string().max(5000).nullish(),
	signature: z.strictObject({ username: z.string().max(100).optional(), password: z.string().min(1).max(1000) })
});

const filterSchema = z.object({
	status: z.enum([...deviationStatuses, 'unfinished']).optional(),
	classification: z.enum([...deviationClassifications, 'unclassified']).optional(),
	batch: z.string().max(100).optional(),
	kind: z.string().max(60).optional(),
	q: z.string().max(200).optional(),
	page: z.coerce.number().int().min(1).max(10_000).optional()
});

export const PAGE_SIZE = 50;

/** List filters from a query string; unknown or malformed values are dropped, never trusted. */
export function filtersFrom(params: URLSearchParams): DeviationFilters & { page: number } {
	const raw = Object.fromEntries([...params].filter(([, v]) => v !== ''));
	const parsed = filterSchema.safeParse(raw);
	const f = parsed.success ? parsed.data : {};
	const page = f.page ?? 1;
	return { status: f.status ?? null, classification: f.classification ?? null, batchId: f.batch ?? null, kind: f.kind ?? null, text: f.q ?? null, limit: PAGE_SIZE, offset: (page - 1) * PAGE_SIZE, page };
}

function tooLarge(maxBytes: number): DeviationError {
	return new DeviationError('too-large', `The request is larger than the ${describeBytes(maxBytes)} allowed here; nothing was saved.`);
}

/** A JSON body within the cap (../http/body.ts); undefined when it is not JSON (the schema then refuses it). */
export async function readDeviationJson(request: Request): Promise<unknown> {
	const bytes = await readBodyCapped(request, DEVIATION_BODY_MAX_BYTES, () => tooLarge(DEVIATION_BODY_MAX_BYTES));
	try {
		return JSON.parse(new TextDecoder().decode(bytes));
	} catch {
		return undefined;
	}
}

/** A form body within the cap, parsed only after the cap held. */
export async function readDeviationForm(request: Request): Promise<FormData> {
	const form = await parseFormBytes(await readBodyCapped(request, DEVIATION_BODY_MAX_BYTES, () => tooLarge(DEVIATION_BODY_MAX_BYTES)), request.headers.get('content-type'));
	if (!form) throw new DeviationError('invalid-input', 'The form could not be read.');
	return form;
}

export function invalidBody(error: z.ZodError): Response {
	return json({ message: 'The request is not in the expected form.', code: 'invalid-input', issues: error.issues.map((i) => ({ path: i.path.join('.'), message: i.message })) }, { status: 400 });
}

/** An API route's answer to an expected refusal: `{ message, code }` with the status (style.md). */
export function deviationJsonError(err: unknown): Response {
	if (isDeviationError(err)) return json({ message: err.message, code: err.code, missing: err.missing, currentVersion: err.currentVersion }, { status: err.status });
	if (isAuthError(err)) return json({ message: err.message, code: err.code }, { status: err.status });
	throw err;
}

export interface DeviationFailure {
	code: string;
	message: string;
	missing: string[];
	/** What the SignDialog shows when the action behind a signature is refused. */
	signError: string;
}

/** A form action's answer to an expected refusal, in the person's language where the catalogue has the code. */
export function deviationFailure(err: unknown, locale: Locale = 'en'): ActionFailure<DeviationFailure> {
	if (isDeviationError(err)) {
		const words = (messagesFor(locale).deviations.errors as Record<string, string | undefined>)[err.code];
		const message = words ? (err.missing.length ? `${words} ${err.message}` : words) : err.message;
		// Prefixed, so the SignDialog does not take another area's words for the same code (error-message.ts).
		return fail(err.status, { code: `deviation.${err.code}`, message, missing: err.missing, signError: message });
	}
	if (isAuthError(err)) return fail(err.status, { code: err.code, message: err.message, missing: [], signError: err.message });
	throw err;
}
