/**
 * An expected refusal of batch execution: an HTTP status, a stable code the routes and the
 * browser translate, a plain message, and per-field issues where there are some. Nothing is
 * written when one is thrown (the unit of work rolls back).
 */
export type ExecutionErrorCode =
	| 'not-found'
	| 'invalid-input'
	| 'invalid-values'
	| 'comment-required'
	| 'reason-required'
	| 'unknown-reason'
	| 'out-of-order'
	| 'already-performed'
	| 'not-performed'
	| 'not-critical'
	| 'already-verified'
	| 'own-entry'
	| 'wrong-role'
	| 'stale-version'
	| 'batch-closed'
	| 'file-too-large'
	| 'file-type-refused'
	| 'late-without-time'
	| 'too-large';

const statusOf: Record<ExecutionErrorCode, 400 | 403 | 404 | 409 | 413 | 415 | 423> = {
	'not-found': 404,
	'invalid-input': 400,
	'invalid-values': 400,
	'comment-required': 400,
	'reason-required': 400,
	'unknown-reason': 400,
	'out-of-order': 409,
	'already-performed': 409,
	'not-performed': 409,
	'not-critical': 400,
	'already-verified': 409,
	'own-entry': 403,
	'wrong-role': 403,
	'stale-version': 409,
	'batch-closed': 423,
	'file-too-large': 413,
	'file-type-refused': 415,
	'late-without-time': 400,
	'too-large': 413
};

export interface ExecutionIssue {
	field?: string;
	code: string;
	message: string;
}

export class ExecutionError extends Error {
	readonly status: 400 | 403 | 404 | 409 | 413 | 415 | 423;
	constructor(
		readonly code: ExecutionErrorCode,
		message: string,
		readonly issues: ExecutionIssue[] = []
	) {
		super(message);
		this.name = 'ExecutionError';
		this.status = statusOf[code];
	}
}

export function isExecutionError(err: unknown): err is ExecutionError {
	return err instanceof ExecutionError;
}
