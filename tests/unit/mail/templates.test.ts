import { describe, expect, test } from 'vitest';
import { composeMail, recordPath } from '$lib/server/mail/templates';

const base = { kind: 'deviation-raised' as const, batchId: 'b 1', deviationId: null, subject: 'Deviation raised', text: 'A deviation was raised.', locale: 'en' };

describe('mail text', () => {
	test('the subject is one line: a caller’s CR/LF cannot start a new header (RFC 5322 2.2, 3.6.5)', () => {
		const m = composeMail({ ...base, subject: 'Deviation raised\r\nBcc: someone@mail-test.invalid' }, undefined, 'Test site');
		expect(m.subject).toBe('Deviation raised Bcc: someone@mail-test.invalid');
		expect(m.subject).not.toMatch(/[\r\n]/);
		expect(composeMail({ ...base, subject: 'x'.repeat(500) }, undefined, 'S').subject).toHaveLength(200);
	});

	test('with ORIGIN configured the text links the record; without it, no link', () => {
		const linked = composeMail({ ...base, deviationId: 'd/2' }, 'https://ebr.plant.invalid', 'Test site');
		expect(linked.text).toContain('Open the record: https://ebr.plant.invalid/deviations/d%2F2');
		expect(composeMail(base, 'https://ebr.plant.invalid/', 'S').text).toContain('https://ebr.plant.invalid/batches/b%201');
		expect(composeMail(base, undefined, 'S').text).not.toContain('http');
		expect(recordPath({ batchId: null, deviationId: null })).toBeNull();
		expect(recordPath({ batchId: 'b', deviationId: null, path: '/people/u1' })).toBe('/people/u1');
	});

	test('plain text, the caller’s words first, then the footer after the RFC 3676 4.3 separator, in the recipient’s language', () => {
		const en = composeMail({ ...base, text: 'Line one\r\nline two' }, undefined, 'Test site');
		expect(en.text.startsWith('Line one\nline two\n\n-- \n')).toBe(true);
		expect(en.text).toContain('This message was sent by Test site.');
		const de = composeMail({ ...base, locale: 'de' }, undefined, 'Test site');
		expect(de.text).toContain('Diese Nachricht wurde von Test site gesendet.');
		// An unknown locale falls back to English.
		expect(composeMail({ ...base, locale: 'xx' }, undefined, 'S').text).toContain('This message was sent by S.');
	});
});
