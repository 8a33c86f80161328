import { describe, expect, test } from 'vitest';
import { masterFailure } from '$lib/server/masters/http';
import { MasterError } from '$lib/server/masters/errors';
import { en } from '$lib/i18n/en';

// Review findings 5/6: the SignDialog shows `signError` for codes outside m.auth.errors, so a master
// refusal must arrive there in the catalogue's words, not as the server's English sentence.
describe('masterFailure: refusals in catalogue words', () => {
	test('a master code becomes its catalogue message in signError; the detail stays in message', () => {
		const err = new MasterError('own-version', 'You wrote TST-1 v1: a second person must approve it.');
		const f = masterFailure(err, 'en');
		expect([f.status, f.data.code, f.data.message]).toEqual([403, 'own-version', err.message]);
		expect(f.data.signError).toBe(en.masters.errors['own-version']);
		expect(f.data.signError).not.toBe(err.message);
	});
	test('every master error code the services throw has catalogue words, including the new ones', () => {
		for (const code of ['invalid', 'forbidden', 'own-version', 'not-found', 'wrong-state', 'open-version', 'code-taken', 'stale', 'duplicate-number', 'reason-required', 'integrity', 'too-large'] as const) {
			expect(masterFailure(new MasterError(code, 'server words'), 'de').data.signError, code).not.toBe('server words');
		}
		expect(new MasterError('too-large', 'x').status).toBe(413);
		expect(new MasterError('integrity', 'x').status).toBe(409);
	});
});
