import nodemailer from 'nodemailer';
import type { Transporter } from 'nodemailer';
import type { Config } from '../config';

/** What the sender needs: a transport and the From address (RFC 5322 3.6.2). */
export interface MailTransport {
	transporter: Transporter;
	from: string;
	/** Where it delivers, for the start-up log; never the password. */
	describe: string;
	close(): void;
}

// Bounded waits, so a mail server that hangs holds a claimed row for at most about a minute,
// well inside the sender's lease (sender.ts). Common practice, not a standard's numbers.
const timeouts = { connectionTimeout: 15_000, greetingTimeout: 15_000, socketTimeout: 30_000, dnsTimeout: 10_000 };

/**
 * The SMTP transport the configuration names: RIMEBOOK_SMTP_URL, or RIMEBOOK_SMTP_HOST with
 * PORT / SECURE / USER / PASSWORD. Null when neither is set (development then starts a local
 * server: devserver.ts). Port 587 with STARTTLS by default (RFC 6409 3.1 message submission);
 * 465 with TLS from the start when RIMEBOOK_SMTP_SECURE=true (RFC 8314 3.3).
 */
export function transportFromConfig(config: Config): MailTransport | null {
	const from = config.RIMEBOOK_MAIL_FROM;
	if (config.RIMEBOOK_SMTP_URL) {
		const url = new URL(config.RIMEBOOK_SMTP_URL);
		return wrap(nodemailer.createTransport({ url: config.RIMEBOOK_SMTP_URL, ...timeouts }), from, `${url.protocol}//${url.host}`);
	}
	if (config.RIMEBOOK_SMTP_HOST) {
		const secure = config.RIMEBOOK_SMTP_SECURE === 'true';
		const port = config.RIMEBOOK_SMTP_PORT ?? (secure ? 465 : 587);
		const auth = config.RIMEBOOK_SMTP_USER ? { user: config.RIMEBOOK_SMTP_USER, pass: config.RIMEBOOK_SMTP_PASSWORD ?? '' } : undefined;
		return wrap(nodemailer.createTransport({ host: config.RIMEBOOK_SMTP_HOST, port, secure, auth, ...timeouts }), from, `${secure ? 'smtps' : 'smtp'}://${config.RIMEBOOK_SMTP_HOST}:${port}`);
	}
	return null;
}

/** A transport to a local test or development server: plain SMTP on 127.0.0.1, no TLS (toolchain.md, "Mail in tests"). */
export function localTransport(port: number, from = 'Rimebook <rimebook@localhost>'): MailTransport {
	return wrap(nodemailer.createTransport({ host: '127.0.0.1', port, secure: false, ignoreTLS: true, ...timeouts }), from, `smtp://127.0.0.1:${port}`);
}

function wrap(transporter: Transporter, from: string, describe: string): MailTransport {
	return { transporter, from, describe, close: () => transporter.close() };
}
