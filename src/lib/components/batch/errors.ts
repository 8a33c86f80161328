import type { Messages } from '$lib/i18n';

/**
 * The text of an execution refusal for the person: the catalogue's message for its code
 * (m.batches.errors; codes may come prefixed `batch-` from form actions), else the fallback.
 * The server's own English is only a last resort, so a German floor does not read English.
 */
export function executionErrorText(m: Messages, code: unknown, fallback: string): string {
	if (typeof code !== 'string') return fallback;
	// The code itself first: 'batch-closed' is a code of its own, 'batch-batch-closed' its prefixed form.
	const bare = code.startsWith('batch-') ? code.slice('batch-'.length) : code;
	return m.batches.errors[code] ?? m.batches.errors[bare] ?? fallback;
}
