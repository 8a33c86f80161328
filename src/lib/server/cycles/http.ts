import { fail, type ActionFailure } from '@sveltejs/kit';
import { messagesFor, type Locale } from '$lib/i18n';
import { isLeakTestError, LeakTestError, type AnyLeakTestError } from './leak';

/** The words for a refusal in the person's language (catalogue cycles.leak.errors). */
export function leakTestErrorText(err: AnyLeakTestError, locale: Locale): string {
	const m = messagesFor(locale);
	const words = m.cycles.leak.errors;
	switch (err.code) {
		case 'no-leak-properties':
			return words['no-leak-properties'](err.params);
		case 'batch-closed':
			return words['batch-closed']({ batch: err.params.batch, status: (m.batches.status as Record<string, string | undefined>)[err.params.status] ?? err.params.status });
		default:
			return words[err.code];
	}
}

/**
 * A page action's answer to a refused leak test: the catalogue's words in the person's language,
 * the code prefixed like the other areas' page codes (deviations/http.ts), 404 for a missing run
 * and 400 otherwise. Anything else is not a refusal and is thrown on.
 */
export function leakTestFailure(err: unknown, locale: Locale): ActionFailure<{ code: string; message: string }> {
	if (isLeakTestError(err)) return fail(err.status === 404 ? 404 : 400, { code: `leak-test.${err.code}`, message: leakTestErrorText(err, locale) });
	throw err;
}

/** The refusal of a window whose end is not after its start (checked by the page before the service). */
export function invalidWindow(): LeakTestError<'invalid-window'> {
	return new LeakTestError('invalid-window', 'Give a window with its end after its start.', {});
}
