import { isLocale, messagesFor } from '$lib/i18n';
import { getConfig } from '../config';
import type { NotificationKind } from '../db/schema';

export interface MailContent {
	kind: NotificationKind;
	batchId: string | null;
	deviationId: string | null;
	/** A path inside the app to link to instead of the batch/deviation page. */
	path?: string | null;
	subject: string;
	text: string;
	locale: string;
}

// RFC 5322 2.1.1: a line SHOULD stay under 78 characters and MUST stay under 998; nodemailer folds
// the Subject header, and a cap keeps a runaway caller from writing a whole page into it.
const SUBJECT_MAX = 200;

/** The path of the record a notification is about, if any. */
export function recordPath(c: Pick<MailContent, 'batchId' | 'deviationId' | 'path'>): string | null {
	if (c.path) return c.path;
	if (c.deviationId) return `/deviations/${encodeURIComponent(c.deviationId)}`;
	if (c.batchId) return `/batches/${encodeURIComponent(c.batchId)}`;
	return null;
}

/**
 * The mail as sent: a one-line subject (no CR/LF: RFC 5322 2.2 header fields are one logical line,
 * so a caller's newline can never inject a header), the caller's plain text, a link to the record
 * when the public address (ORIGIN) is configured, and a footer in the recipient's language.
 * Plain text only and nothing secret: the mail is a notice; the record stays in the system.
 */
export function composeMail(c: MailContent, origin: string | undefined = getConfig().ORIGIN, site: string = getConfig().RIMEBOOK_SITE_NAME): { subject: string; text: string } {
	const m = messagesFor(isLocale(c.locale) ? c.locale : 'en').mail;
	const subject = c.subject.replace(/\s+/g, ' ').trim().slice(0, SUBJECT_MAX);
	const parts = [c.text.replace(/\r\n?/g, '\n').trim()];
	const path = recordPath(c);
	if (path && origin) parts.push(`${m.openRecord} ${new URL(path, origin).href}`);
	// "-- " on its own line is the signature separator of RFC 3676 4.3: mail readers grey out the footer.
	return { subject, text: `${parts.join('\n\n')}\n\n-- \n${m.footer({ site })}\n` };
}
