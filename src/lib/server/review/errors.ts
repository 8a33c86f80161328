import type { GateReason } from '$lib/domain/disposition';

/**
 * An expected refusal of review or disposition: an HTTP status, a stable code the routes and the
 * page translate, a plain message, and for a refused disposition every gate that is open. Nothing
 * is written when one is thrown (the unit of work rolls back).
 */
export type ReviewErrorCode = 'not-found' | 'invalid-input' | 'unknown-item' | 'not-markable' | 'item-changed' | 'already-reviewed' | 'batch-closed' | 'stale-version' | 'gates-open';

const statusOf: Record<ReviewErrorCode, 400 | 404 | 409 | 423> = {
	'not-found': 404,
	'invalid-input': 400,
	'unknown-item': 404,
	'not-markable': 409,
	'item-changed': 409,
	'already-reviewed': 409,
	'batch-closed': 423,
	'stale-version': 409,
	'gates-open': 409
};

export class ReviewError extends Error {
	readonly status: 400 | 403 | 404 | 409 | 423;
	constructor(
		readonly code: ReviewErrorCode,
		message: string,
		readonly reasons: GateReason[] = []
	) {
		super(message);
		this.name = 'ReviewError';
		// A gate that is about who signs is a 403, the rest a conflict with the batch's state.
		this.status = code === 'gates-open' && reasons.length > 0 && reasons.every((r) => r.code.startsWith('signer-')) ? 403 : statusOf[code];
	}
}

export function isReviewError(err: unknown): err is ReviewError {
	return err instanceof ReviewError;
}
