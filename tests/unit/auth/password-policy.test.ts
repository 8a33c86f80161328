import { describe, expect, test } from 'vitest';
import { checkPassword, passwordLength, PASSWORD_MAX_LENGTH, PASSWORD_MIN_LENGTH } from '$lib/domain/password-policy';
import { checkNewPassword, isBlockedPassword } from '$lib/server/auth/blocklist';

const ctx = { username: 'priya', name: 'Priya Halden' };

describe('password rules (NIST SP 800-63B-4 §3.1.1.2; OWASP ASVS 5.0 V6.2)', () => {
	// The issue: at least 12 characters. ASVS V6.2.1 asks ≥ 8; 12 is stricter.
	test('12 characters pass the length rule, 11 do not', () => {
		expect(checkPassword('a'.repeat(0) + 'qzmvlkrtwbxn', ctx)).toEqual([]);
		expect(checkPassword('qzmvlkrtwbx', ctx)).toEqual(['too-short']);
		expect(PASSWORD_MIN_LENGTH).toBe(12);
	});

	// NIST §3.1.1.2: SHOULD permit at least 64 characters; ASVS V6.2.9 likewise.
	test('at least 64 characters are allowed', () => {
		expect(PASSWORD_MAX_LENGTH).toBeGreaterThanOrEqual(64);
		const long = 'Frozen vials rest on cold shelves while the condenser hums along, all night.';
		expect(passwordLength(long)).toBeGreaterThan(64);
		expect(checkPassword(long, ctx)).toEqual([]);
		expect(checkPassword('x'.repeat(PASSWORD_MAX_LENGTH) + 'yz', ctx)).toContain('too-long');
	});

	// NIST §3.1.1.2: no composition rules — lower-case letters only, or spaces, are fine.
	test('no composition rules: all lower-case, spaces and Unicode are accepted', () => {
		expect(checkPassword('correct horse battery staple', ctx)).toEqual([]);
		expect(checkPassword('schneeflockenmorgen', ctx)).toEqual([]);
		expect(checkPassword('雪の結晶と凍結乾燥の夜明け', ctx)).toEqual([]);
	});

	// NIST §3.1.1.2: each Unicode code point counts as one character, after normalisation.
	test('length counts code points after NFKC normalisation', () => {
		expect(passwordLength('🧊🧊🧊🧊🧊🧊🧊🧊🧊🧊🧊🧊')).toBe(12);
		// U+FB01 "ﬁ" normalises (NFKC) to "fi": two characters.
		expect(passwordLength('\uFB01')).toBe(2);
	});

	// NIST §3.1.1.2: context-specific words (username, service name) are refused; the issue: not containing the username.
	test('refuses the username, the printed name and the service name inside it', () => {
		expect(checkPassword('priya-loves-lyophilisation', ctx)).toContain('contains-username');
		expect(checkPassword('PRIYA-LOVES-LYOPHILISATION', ctx)).toContain('contains-username');
		expect(checkPassword('mister-halden-2026-xx', { username: 'ph', name: 'Priya Halden' })).toContain('context');
		expect(checkPassword('my-rimebook-password', ctx)).toContain('context');
	});

	// NIST §3.1.1.2: "repetitive or sequential characters" (800-63B rev. 3 example list; rev. 4 keeps "expected values").
	test('refuses repeated and sequential runs', () => {
		expect(checkPassword('aaaaaaaaaaaaaa', ctx)).toContain('repetitive');
		expect(checkPassword('123456789012', ctx)).toContain('repetitive');
		expect(checkPassword('abcdefghijklm', ctx)).toContain('repetitive');
		expect(checkPassword('zyxwvutsrqpon', ctx)).toContain('repetitive');
	});
});

describe('blocklist (NIST SP 800-63B-4 §3.1.1.2: commonly used and breached values)', () => {
	// @zxcvbn-ts/language-common 4.1.3, dictionary "passwords-common" (ranked breach-corpus passwords).
	test('the list holds well-known breached passwords and not random phrases', () => {
		expect(isBlockedPassword('password')).toBe(true);
		expect(isBlockedPassword('123456789')).toBe(true);
		expect(isBlockedPassword('qwerty123456')).toBe(true);
		expect(isBlockedPassword('quiet lantern orbit meadow')).toBe(false);
	});

	test('a listed password of 12+ characters is refused, case-insensitively, and with digits stuck on', () => {
		expect(checkNewPassword('qwerty123456', { username: 'x1' })).toContain('common');
		expect(checkNewPassword('1QAZ2WSX3EDC', { username: 'x1' })).toContain('common');
		expect(checkNewPassword('sunshine2026!!', { username: 'x1' })).toContain('common');
		expect(checkNewPassword('password1234', { username: 'x1' })).toContain('common');
	});

	// config.ts default RIMEBOOK_DEMO_PASSWORD must pass the same rules as any password (the demo accounts sign in).
	test('the default demo password passes the rules for every demo account', () => {
		for (const [username, name] of [
			['author', 'Maren Oakhurst'],
			['operator', 'Tomas Reyvik'],
			['operator2', 'Leila Fenwright'],
			['supervisor', 'Dario Kettleby'],
			['qa', 'Priya Halden'],
			['inspector', 'Olu Brannigan'],
			['admin', 'Sam Whitcombe']
		]) {
			expect(checkNewPassword('frost-demo-2026', { username, name })).toEqual([]);
		}
	});
});
