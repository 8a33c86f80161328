import { randomInt } from 'node:crypto';
import { dictionary } from '@zxcvbn-ts/language-common';
import { checkNewPassword } from '../auth/blocklist';

const words = dictionary['diceware-common'] as string[];

/**
 * A one-time password an admin hands over for a new or reset account: five words from the 7,776-word
 * diceware list (≈ 64.6 bits of entropy; NIST SP 800-63B-4 §3.1.1.2 allows verifier-chosen
 * secrets of that strength). The account must change it at first sign-in.
 */
export function generateTemporaryPassword(account: { username: string; name?: string }): string {
	for (;;) {
		const candidate = Array.from({ length: 5 }, () => words[randomInt(words.length)]).join('-');
		if (checkNewPassword(candidate, account).length === 0) return candidate;
	}
}
