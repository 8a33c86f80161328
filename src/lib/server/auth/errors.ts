/**
 * An expected refusal with the HTTP status it maps to (style.md: 400, 401, 403, 409, 423, 429)
 * and a code the routes turn into a plain, translated message.
 */
export type AuthErrorCode =
	| 'invalid-input'
	| 'bad-credentials'
	| 'locked'
	| 'disabled'
	| 'rate-limited'
	| 'challenge'
	| 'passkey-invalid'
	| 'password-rules'
	| 'not-yourself'
	| 'service-account'
	| 'admin-gmp'
	| 'no-session'
	| 'username-required'
	| 'passkey-not-allowed'
	| 'conflict'
	| 'forbidden'
	| 'not-found';

const statusOf: Record<AuthErrorCode, 400 | 401 | 403 | 404 | 409 | 423 | 429> = {
	'invalid-input': 400,
	'bad-credentials': 401,
	locked: 423,
	disabled: 403,
	'rate-limited': 429,
	challenge: 400,
	'passkey-invalid': 401,
	'password-rules': 400,
	'not-yourself': 403,
	'service-account': 403,
	'admin-gmp': 403,
	'no-session': 401,
	'username-required': 400,
	'passkey-not-allowed': 400,
	conflict: 409,
	forbidden: 403,
	'not-found': 404
};

export class AuthError extends Error {
	readonly status: 400 | 401 | 403 | 404 | 409 | 423 | 429;
	constructor(
		readonly code: AuthErrorCode,
		message?: string,
		readonly details?: Record<string, unknown>
	) {
		super(message ?? code);
		this.name = 'AuthError';
		this.status = statusOf[code];
	}
}

export function isAuthError(err: unknown): err is AuthError {
	return err instanceof AuthError;
}
