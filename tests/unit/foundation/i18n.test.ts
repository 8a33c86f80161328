import { describe, expect, it } from 'vitest';
import { en } from '$lib/i18n/en';
import { locales, messagesFor, negotiateLocale } from '$lib/i18n';

/** Every leaf path of a catalogue, for comparing locales. */
function leaves(obj: unknown, prefix = ''): string[] {
	if (typeof obj !== 'object' || obj === null) return [prefix];
	return Object.entries(obj).flatMap(([k, v]) => leaves(v, prefix ? `${prefix}.${k}` : k));
}

describe('message catalogue', () => {
	it('negotiates the language from Accept-Language by quality (RFC 9110, 12.5.4)', () => {
		expect(negotiateLocale('de-DE,de;q=0.9,en;q=0.8')).toBe('de');
		expect(negotiateLocale('fr-CH, fr;q=0.9, en;q=0.8, de;q=0.7')).toBe('en');
		expect(negotiateLocale('en;q=0.2, de;q=0.9')).toBe('de');
		expect(negotiateLocale('')).toBe('en');
		expect(negotiateLocale(null)).toBe('en');
	});

	it('German covers the whole shell, so no English leaks into navigation', () => {
		const de = messagesFor('de');
		const shellKeys = leaves(en.shell);
		// Words German writes the same way as English.
		const sameInGerman = new Set(['roles.admin']);
		for (const key of shellKeys) {
			const path = key.split('.');
			const enValue = path.reduce<unknown>((o, k) => (o as Record<string, unknown>)[k], en.shell);
			const deValue = path.reduce<unknown>((o, k) => (o as Record<string, unknown>)[k], de.shell);
			expect(deValue, `shell.${key}`).toBeDefined();
			if (typeof enValue === 'string' && !sameInGerman.has(key)) expect(deValue, `shell.${key} is still English`).not.toBe(enValue);
		}
	});

	it('every locale has every message of English (falling back where not translated)', () => {
		const all = leaves(en);
		for (const locale of locales) expect(leaves(messagesFor(locale)).sort()).toEqual([...all].sort());
	});

	it('parameterised messages fill their parameters', () => {
		expect(messagesFor('de').shell.error.title({ status: 404 })).toBe('Fehler 404');
		expect(messagesFor('en').shell.today.auditHeadValue({ count: 3 })).toBe('3 events recorded');
	});
});
