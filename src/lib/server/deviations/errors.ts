import type { RequiredField } from '$lib/domain/deviation-lifecycle';

/**
 * An expected refusal of a deviation service, with the HTTP status routes map it to (style.md:
 * 400 bad input, 403 not allowed, 404 missing, 409 the record's state or version forbids it,
 * 413 too large, 422 the request is well-formed but the record lacks what the action needs).
 * Nothing was written when one is thrown: services throw before or inside their unit of work.
 */
export type DeviationErrorCode =
	| 'invalid-input'
	| 'forbidden'
	| 'own-submission'
	| 'not-found'
	| 'wrong-state'
	| 'stale-version'
	| 'batch-closed'
	| 'unknown-step'
	| 'incomplete'
	| 'reason-required'
	| 'too-large';

export type DeviationErrorStatus = 400 | 403 | 404 | 409 | 413 | 422;

const statusOf: Record<DeviationErrorCode, DeviationErrorStatus> = {
	'invalid-input': 400,
	forbidden: 403,
	'own-submission': 403,
	'not-found': 404,
	'wrong-state': 409,
	'stale-version': 409,
	'batch-closed': 409,
	'unknown-step': 422,
	incomplete: 422,
	'reason-required': 422,
	'too-large': 413
};

export class DeviationError extends Error {
	readonly status: DeviationErrorStatus;
	constructor(
		readonly code: DeviationErrorCode,
		message: string,
		/** For `incomplete`: the fields still empty. For `stale-version`: see `currentVersion`. */
		readonly missing: RequiredField[] = [],
		readonly currentVersion: number | null = null
	) {
		super(message);
		this.name = 'DeviationError';
		this.status = statusOf[code];
	}
}

export function isDeviationError(err: unknown): err is DeviationError {
	return err instanceof DeviationError;
}
