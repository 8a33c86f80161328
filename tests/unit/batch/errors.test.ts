import { describe, expect, test } from 'vitest';
import { messagesFor } from '$lib/i18n';
import { executionErrorText } from '$lib/components/batch/errors';

// Review finding 5: refusal codes are shown as catalogue messages in the person's language (design.md, "Look and words").
describe('execution refusals in the catalogue', () => {
	test('a code, bare or as a form action sends it (batch-…), gives the message of the locale', () => {
		expect(executionErrorText(messagesFor('de'), 'file-too-large', 'The file is larger than the 20 MB allowed here.')).toBe('Die Datei ist zu groß.');
		expect(executionErrorText(messagesFor('de'), 'batch-batch-closed', 'x')).toBe('Diese Charge ist abgeschlossen.');
		expect(executionErrorText(messagesFor('en'), 'batch-closed', 'x')).toBe('This batch is closed.');
	});

	test('an unknown or missing code falls back to the text given', () => {
		expect(executionErrorText(messagesFor('de'), 'no-such-code', 'fallback')).toBe('fallback');
		expect(executionErrorText(messagesFor('en'), undefined, 'fallback')).toBe('fallback');
	});
});
