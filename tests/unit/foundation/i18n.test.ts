import { describe, expect, it } from 'vitest';
import { en } from '$lib/i18n/en';
import { de } from '$lib/i18n/de';
import { messagesFor, negotiateLocale } from '$lib/i18n';

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
		// The German catalogue itself (not merged with English): every shell message is there.
		const own = de.shell as unknown;
		// Words German writes the same way as English.
		const sameInGerman = new Set(['roles.admin']);
		for (const key of leaves(en.shell)) {
			const path = key.split('.');
			const enValue = path.reduce<unknown>((o, k) => (o as Record<string, unknown>)[k], en.shell);
			const deValue = path.reduce<unknown>((o, k) => (o as Record<string, unknown> | undefined)?.[k], own);
			expect(deValue, `shell.${key} has no German text`).toBeDefined();
			expect(typeof deValue, `shell.${key}`).toBe(typeof enValue);
			if (typeof enValue === 'string' && !sameInGerman.has(key)) expect(deValue, `shell.${key} is still English`).not.toBe(enValue);
		}
	});

	it('German names no message that English lacks (a stale or misspelt key would never show)', () => {
		const english = new Set(leaves(en));
		const stale = leaves(de).filter((key) => !english.has(key));
		expect(stale).toEqual([]);
	});

	it('falls back to English where German has no text yet', () => {
		const merged = messagesFor('de');
		expect(leaves(merged).sort()).toEqual(leaves(en).sort());
		// The audit area is partly German, partly English: the merge must keep both.
		expect(merged.shell.areas.audit).toBe('Audit-Trail');
		expect(merged.common.appName).toBe('Rimebook');
	});

	it('parameterised messages fill their parameters', () => {
		expect(messagesFor('de').shell.error.title({ status: 404 })).toBe('Fehler 404');
		expect(messagesFor('en').shell.today.auditHeadValue({ count: 3 })).toBe('3 events recorded');
	});
});
