import type { TemplateIssue } from '$lib/domain/template';

/**
 * An expected refusal of a master-record or issuance service, with the HTTP status routes map it
 * to (style.md: 400 bad input, 403 not allowed, 404 missing, 409 the record's state forbids it,
 * 413 a request body over its route's cap).
 * Nothing was changed when one is thrown: services throw before or inside their unit of work.
 */
export type MasterErrorCode =
	| 'invalid'
	| 'forbidden'
	| 'own-version'
	| 'not-found'
	| 'wrong-state'
	| 'open-version'
	| 'code-taken'
	| 'stale'
	| 'duplicate-number'
	| 'reason-required'
	| 'integrity'
	| 'too-large';

type MasterErrorStatus = 400 | 403 | 404 | 409 | 413;

const statusOf: Record<MasterErrorCode, MasterErrorStatus> = {
	invalid: 400,
	'reason-required': 400,
	forbidden: 403,
	'own-version': 403,
	'not-found': 404,
	'wrong-state': 409,
	'open-version': 409,
	'code-taken': 409,
	stale: 409,
	'duplicate-number': 409,
	// The stored content no longer matches its hash (11.10(a)): the record's state forbids signing it.
	integrity: 409,
	'too-large': 413
};

export class MasterError extends Error {
	readonly status: MasterErrorStatus;
	constructor(
		readonly code: MasterErrorCode,
		message: string,
		/** Every problem found, for 400 `{ message, issues }` (Annex 11, 5: imports are checked). */
		readonly issues: TemplateIssue[] = []
	) {
		super(message);
		this.name = 'MasterError';
		this.status = statusOf[code];
	}
}

export function isMasterError(err: unknown): err is MasterError {
	return err instanceof MasterError;
}
