import { getContext, setContext } from 'svelte';
import { en } from './en';
import { de } from './de';

export const locales = ['en', 'de'] as const;
export type Locale = (typeof locales)[number];
export type Messages = typeof en;

export const localeNames: Record<Locale, string> = { en: 'English', de: 'Deutsch' };

const partials: Record<Locale, unknown> = { en, de };
const built = new Map<Locale, Messages>();

export function isLocale(value: unknown): value is Locale {
	return typeof value === 'string' && (locales as readonly string[]).includes(value);
}

/** The catalogue of a locale: its own messages over the English ones. */
export function messagesFor(locale: Locale): Messages {
	let messages = built.get(locale);
	if (!messages) {
		messages = mergeOver(en, partials[locale]) as Messages;
		built.set(locale, messages);
	}
	return messages;
}

function mergeOver(base: unknown, over: unknown): unknown {
	if (over === undefined) return base;
	if (typeof base !== 'object' || base === null || typeof over !== 'object' || over === null) return over;
	const out: Record<string, unknown> = { ...(base as Record<string, unknown>) };
	for (const [key, value] of Object.entries(over)) out[key] = mergeOver(out[key], value);
	return out;
}

/** Picks the first supported language of an Accept-Language header, else English. */
export function negotiateLocale(acceptLanguage: string | null | undefined): Locale {
	if (!acceptLanguage) return 'en';
	const ranked = acceptLanguage
		.split(',')
		.map((part) => {
			const [tag, ...params] = part.trim().split(';');
			const q = params.find((p) => p.trim().startsWith('q='));
			return { tag: tag.trim().toLowerCase().split('-')[0], q: q ? Number(q.split('=')[1]) : 1 };
		})
		.filter((x) => x.tag && Number.isFinite(x.q))
		.sort((a, b) => b.q - a.q);
	return ranked.map((x) => x.tag).find(isLocale) ?? 'en';
}

const KEY = Symbol('rimebook.messages');

/** Called once by the root layout with the request's locale. */
export function provideMessages(locale: Locale): Messages {
	const messages = messagesFor(locale);
	setContext(KEY, messages);
	return messages;
}

/** The catalogue in a component: `const m = useMessages();` then `{m.shell.areas.today}`. */
export function useMessages(): Messages {
	return getContext<Messages>(KEY) ?? messagesFor('en');
}
