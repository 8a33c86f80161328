import type { SMTPServer } from 'smtp-server';

/** A message the local SMTP server received, as the development mailbox shows it. */
export interface CapturedMail {
	receivedAt: string;
	/** SMTP envelope recipients (RFC 5321 3.3 RCPT TO), which are who actually gets it. */
	envelopeTo: string[];
	from: string;
	to: string;
	subject: string;
	text: string;
	messageId: string | null;
}

export interface CaptureServer {
	port: number;
	messages: CapturedMail[];
	close(): Promise<void>;
}

// Development only: keep the last few hundred, not everything a long session sends.
const KEEP = 200;

/**
 * A local SMTP server on 127.0.0.1 that keeps what it receives, parsed with mailparser: the
 * development stand-in for a real relay (toolchain.md, "Mail in tests": authOptional, no
 * STARTTLS). smtp-server and mailparser are development dependencies, so they are loaded only
 * here, only when this is called (never in production: mail/index.ts).
 */
export async function startCaptureServer(options: { port?: number } = {}): Promise<CaptureServer> {
	const [{ SMTPServer }, { simpleParser }] = await Promise.all([import('smtp-server'), import('mailparser')]);
	const messages: CapturedMail[] = [];
	const server: SMTPServer = new SMTPServer({
		authOptional: true,
		disabledCommands: ['STARTTLS'],
		logger: false,
		// RFC 1870 SIZE: notices are short; refuse anything beyond 1 MB.
		size: 1024 * 1024,
		onData(stream, session, callback) {
			simpleParser(stream)
				.then((parsed) => {
					const to = Array.isArray(parsed.to) ? parsed.to.map((a) => a.text).join(', ') : (parsed.to?.text ?? '');
					messages.unshift({
						receivedAt: new Date().toISOString(),
						envelopeTo: session.envelope.rcptTo.map((r) => r.address),
						from: parsed.from?.text ?? '',
						to,
						subject: parsed.subject ?? '',
						text: parsed.text ?? '',
						messageId: parsed.messageId ?? null
					});
					messages.splice(KEEP);
					callback();
				})
				.catch((err: Error) => callback(err));
		}
	});
	await new Promise<void>((resolve, reject) => {
		server.once('error', reject);
		server.listen(options.port ?? 0, '127.0.0.1', () => {
			server.off('error', reject);
			resolve();
		});
	});
	// A client that drops mid-message must not take the dev server down with it.
	server.on('error', (err) => console.error('[mail] development SMTP server:', err.message));
	const address = server.server.address();
	const port = typeof address === 'object' && address ? address.port : 0;
	return { port, messages, close: () => new Promise<void>((resolve) => server.close(() => resolve())) };
}
