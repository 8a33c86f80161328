import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { AuthError } from '../auth/errors';
import { isExecutionError } from '../batches/errors';
import { messagesFor, type Locale } from '$lib/i18n';
import type { GateReason } from '$lib/domain/disposition';
import type { ReviewItem } from '$lib/domain/review';
import { isReviewError } from './errors';

export const REVIEW_BODY_MAX_BYTES = 16 * 1024;

export const markBodySchema = z.strictObject({ itemKey: z.string().min(1).max(200), itemHash: z.string().min(1).max(128), comment: z.string().max(2000).optional() });

export const dispositionBodySchema = z.strictObject({
	decision: z.enum(['released', 'rejected']),
	comment: z.string().max(2000).optional(),
	version: z.number().int().positive().optional(),
	signature: z.strictObject({ username: z.string().max(100).optional(), password: z.string().min(1).max(1000) })
});

/**
 * The gate reasons in the person's language, one sentence each (the page and the sign dialog show
 * them). Item keys are shown as the item's kind and step ("Value out of limits 2.1") when known.
 */
export function describeGates(reasons: readonly GateReason[], locale: Locale, items: readonly Pick<ReviewItem, 'key' | 'kind' | 'stepLabel'>[] = []): string[] {
	const m = messagesFor(locale).review;
	const byKey = new Map(items.map((i) => [i.key, `${m.kinds[i.kind]}${i.stepLabel ? ` ${i.stepLabel}` : ''}`]));
	return reasons.map((r) => `${m.gates[r.code]({ subjects: r.subjects.map((x) => (r.code === 'unreviewed-item' ? (byKey.get(x) ?? x) : x)).join(', ') })} (${r.clause})`);
}

/** An expected refusal as JSON with its status; a refused disposition carries every open gate. */
export function reviewRefusal(err: unknown): Response {
	if (isReviewError(err)) return json({ message: err.message, code: err.code, reasons: err.reasons }, { status: err.status });
	if (isExecutionError(err)) return json({ message: err.message, code: err.code }, { status: err.status });
	if (err instanceof AuthError) return json({ message: err.message, code: err.code }, { status: err.status });
	throw err;
}
