import { describe, expect, test } from 'vitest';
import { signErrorMessage } from '$lib/components/signing/error-message';
import { messagesFor } from '$lib/i18n';

// Review finding 5: a refused signing shows the catalogue's words for its code, from whichever
// area the code belongs to, and the server's message only for a code no catalogue knows.
describe('signErrorMessage', () => {
	const en = messagesFor('en');
	const de = messagesFor('de');

	test('auth, batch and master codes all map to their catalogue entries', () => {
		expect(signErrorMessage(en, 'bad-credentials', 'server words')).toBe(en.auth.errors['bad-credentials']);
		expect(signErrorMessage(en, 'own-entry', 'server words')).toBe(en.batches.errors['own-entry']);
		expect(signErrorMessage(en, 'own-version', 'server words')).toBe(en.masters.errors['own-version']);
		expect(signErrorMessage(de, 'own-version', 'server words')).toBe(de.masters.errors['own-version']);
		for (const text of [signErrorMessage(en, 'own-entry', 'x'), signErrorMessage(en, 'own-version', 'x')]) expect(text).not.toBe('x');
	});

	test('the asking area wins for a code several areas know', () => {
		expect(en.masters.errors['not-found']).not.toBe(en.auth.errors['not-found']);
		expect(signErrorMessage(en, 'not-found', 'x', 'masters')).toBe(en.masters.errors['not-found']);
		expect(signErrorMessage(en, 'not-found', 'x')).toBe(en.auth.errors['not-found']);
	});

	test('unknown codes fall back to the server message, then to the generic text; prototype names are no codes', () => {
		expect(signErrorMessage(en, 'no-such-code', 'The server explains.')).toBe('The server explains.');
		expect(signErrorMessage(en, 'toString', 'The server explains.')).toBe('The server explains.');
		expect(signErrorMessage(en, '', undefined)).toBe(en.common.unknownError);
		expect(signErrorMessage(en, 'no-such-code', '   ')).toBe(en.common.unknownError);
	});
});
