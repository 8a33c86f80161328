/**
 * Password rules after NIST SP 800-63B-4 §3.1.1.2 and OWASP ASVS 5.0 V6.2: a length floor and a
 * generous ceiling, no composition rules, no forced rotation, and refusal of common, expected or
 * context-specific values. Pure and isomorphic: the server passes the blocklist, the browser can
 * run the length rules for instant feedback.
 */

/** ASVS 5.0 V6.2.1 asks for at least 8, NIST SP 800-63B-4 §3.1.1.2 for 15 when it is the only factor; the issue sets 12. */
export const PASSWORD_MIN_LENGTH = 12;
/** Shown on screen as the recommendation (ASVS V6.2.1 recommends 15). */
export const PASSWORD_RECOMMENDED_LENGTH = 15;
/** NIST SP 800-63B-4 §3.1.1.2: verifiers SHOULD permit at least 64 characters; ASVS V6.2.9 likewise. */
export const PASSWORD_MAX_LENGTH = 128;

export type PasswordProblem = 'too-short' | 'too-long' | 'common' | 'contains-username' | 'context' | 'repetitive';

export interface PasswordContext {
	username: string;
	/** The printed name; its parts of 4+ letters are context-specific words (NIST §3.1.1.2). */
	name?: string;
	/** True when the lower-cased value is on the blocklist of common or breached passwords. */
	isBlocked?: (lowercased: string) => boolean;
}

/** Words of the service itself (NIST SP 800-63B-4 §3.1.1.2, "context-specific words"). */
const serviceWords = ['rimebook'];

/**
 * Length counts Unicode code points after NFKC normalisation (NIST SP 800-63B-4 §3.1.1.2: each
 * Unicode code point counts as one character; normalise before hashing).
 */
export function normalisePassword(password: string): string {
	return password.normalize('NFKC');
}

export function passwordLength(password: string): number {
	return [...normalisePassword(password)].length;
}

/** The problems of a proposed password, or [] when it may be used. */
export function checkPassword(password: string, context: PasswordContext): PasswordProblem[] {
	const problems: PasswordProblem[] = [];
	const normalised = normalisePassword(password);
	const length = [...normalised].length;
	if (length < PASSWORD_MIN_LENGTH) problems.push('too-short');
	if (length > PASSWORD_MAX_LENGTH) problems.push('too-long');
	const lower = normalised.toLowerCase();
	const username = context.username.trim().toLowerCase();
	if (username && lower.includes(username)) problems.push('contains-username');
	const nameParts = (context.name ?? '')
		.toLowerCase()
		.split(/[^\p{L}]+/u)
		.filter((p) => p.length >= 4);
	if ([...serviceWords, ...nameParts].some((w) => lower.includes(w))) problems.push('context');
	if (isRepetitive(lower)) problems.push('repetitive');
	if (context.isBlocked && isCommon(lower, context.isBlocked)) problems.push('common');
	return problems;
}

/**
 * On the blocklist as it is, or as a listed word with only digits and symbols around it
 * ("sunshine2026!"): NIST SP 800-63B-4 §3.1.1.2 names "commonly used, expected" values.
 */
function isCommon(lower: string, isBlocked: (lowercased: string) => boolean): boolean {
	if (isBlocked(lower)) return true;
	const core = lower.replace(/^[\d\W_]+/u, '').replace(/[\d\W_]+$/u, '');
	return core.length >= 4 && core !== lower && isBlocked(core);
}

/** One repeated character or a run of consecutive code points ("aaaaaaaaaaaa", "123456789012", "abcdefghijkl"). */
function isRepetitive(lower: string): boolean {
	const chars = [...lower];
	if (chars.length === 0) return false;
	if (chars.every((c) => c === chars[0])) return true;
	const codes = chars.map((c) => c.codePointAt(0) ?? 0);
	const steps = codes.slice(1).map((c, i) => c - codes[i]);
	// "1234567890" wraps from 9 to 0; treat the wrap as a step of +1.
	const ascending = steps.every((s, i) => s === 1 || (s === -9 && chars[i] === '9'));
	const descending = steps.every((s) => s === -1);
	return ascending || descending;
}
