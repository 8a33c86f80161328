import type { Messages } from '$lib/i18n';

/** Areas whose catalogue has an `errors` table of refusal codes a signing action may answer with. */
export type ErrorArea = 'auth' | 'batches' | 'masters' | 'deviations' | 'review';

const DEFAULT_ORDER: readonly ErrorArea[] = ['auth', 'batches', 'masters', 'deviations', 'review'];

function lookup(m: Messages, area: ErrorArea, code: string): string | undefined {
	const table = (m[area] as { errors?: unknown }).errors;
	if (typeof table !== 'object' || table === null || !Object.hasOwn(table, code)) return undefined;
	const text = (table as Record<string, unknown>)[code];
	return typeof text === 'string' ? text : undefined;
}

/**
 * The words for a refused signing (review finding 5): the code is looked up in the catalogue of
 * the area that asked first (when given), then in auth, batches, masters, deviations and review; a code none of them
 * knows shows the server's own message, and nothing at all the generic "unknown error".
 */
export function signErrorMessage(m: Messages, code: string, serverMessage?: unknown, area?: ErrorArea): string {
	if (code) {
		for (const a of area ? [area, ...DEFAULT_ORDER.filter((x) => x !== area)] : DEFAULT_ORDER) {
			const text = lookup(m, a, code);
			if (text) return text;
		}
	}
	return typeof serverMessage === 'string' && serverMessage.trim() ? serverMessage : m.common.unknownError;
}
