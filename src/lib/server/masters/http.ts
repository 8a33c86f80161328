import { fail, json, type ActionFailure } from '@sveltejs/kit';
import { isAuthError } from '../auth/errors';
import type { TemplateIssue } from '$lib/domain/template';
import { isMasterError } from './errors';

export interface MasterFailure {
	code: string;
	message: string;
	issues: TemplateIssue[];
	/** What the SignDialog shows when the action behind a signature is refused (credentials.ts, signatureFailure). */
	signError: string;
}

/** A form action's answer to an expected refusal: its status, code, message and every issue. */
export function masterFailure(err: unknown): ActionFailure<MasterFailure> {
	if (isMasterError(err)) return fail(err.status, { code: err.code, message: err.message, issues: err.issues, signError: err.message });
	if (isAuthError(err)) return fail(err.status, { code: err.code, message: err.message, issues: [], signError: err.message });
	throw err;
}

/** An API route's answer to an expected refusal: `{ message, issues }` with the status (style.md). */
export function masterJsonError(err: unknown): Response {
	if (isMasterError(err)) return json({ message: err.message, code: err.code, issues: err.issues }, { status: err.status });
	if (isAuthError(err)) return json({ message: err.message, code: err.code, issues: [] }, { status: err.status });
	throw err;
}
