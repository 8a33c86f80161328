import { dictionary } from '@zxcvbn-ts/language-common';
import { checkPassword, type PasswordProblem } from '$lib/domain/password-policy';

let common: Set<string> | undefined;

/**
 * The blocklist of common and breached passwords (NIST SP 800-63B-4 §3.1.1.2; ASVS V6.2.4):
 * the 49,233 most frequent passwords of public breach corpora that @zxcvbn-ts/language-common
 * ships as its `passwords-common` dictionary (MIT).
 */
export function isBlockedPassword(lowercased: string): boolean {
	common ??= new Set((dictionary['passwords-common'] as string[]).map((p) => p.toLowerCase()));
	return common.has(lowercased);
}

/** The problems of a new password for this account, blocklist included. */
export function checkNewPassword(password: string, account: { username: string; name?: string }): PasswordProblem[] {
	return checkPassword(password, { ...account, isBlocked: isBlockedPassword });
}
