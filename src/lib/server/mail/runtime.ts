import type { Database } from '../db/client';
import type { Config } from '../config';
import { startMailSender, type RunningSender } from './sender';
import { localTransport, transportFromConfig, type MailTransport } from './transport';
import type { CaptureServer } from './devserver';

interface MailRuntime {
	sender: RunningSender;
	transport: MailTransport;
	capture: CaptureServer | null;
}

// On globalThis, so the development mailbox page and hooks.server.ts see one runtime even when
// Vite's dev server reloads modules.
const KEY = Symbol.for('rimebook.mail.runtime');
const store = globalThis as typeof globalThis & { [KEY]?: Promise<MailRuntime | null> };

/**
 * Starts the background sender once per process (hooks.server.ts init, beside the checkpoint
 * schedule). With SMTP configured it sends there. Without it, outside production, it starts the
 * local capture server (devserver.ts) and sends to that; in production it starts nothing and logs
 * that notifications wait in the outbox until SMTP is configured: they are kept, not lost.
 */
export function ensureMailSender(db: Database, config: Config): Promise<MailRuntime | null> {
	store[KEY] ??= (async () => {
		let transport = transportFromConfig(config);
		let capture: CaptureServer | null = null;
		if (!transport) {
			if (config.NODE_ENV === 'production') {
				console.warn('[mail] no SMTP server configured (RIMEBOOK_SMTP_URL or RIMEBOOK_SMTP_HOST): notifications wait in the outbox until one is.');
				return null;
			}
			const { startCaptureServer } = await import('./devserver');
			capture = await startCaptureServer();
			transport = localTransport(capture.port, config.RIMEBOOK_MAIL_FROM);
		}
		console.log(`[mail] sending notifications through ${transport.describe}${capture ? ' (local development server; see /dev/mail)' : ''}`);
		return { sender: startMailSender(db, transport), transport, capture };
	})().catch((err) => {
		// Mail is never a reason not to start: the outbox keeps everything for later.
		console.error('[mail] the sender did not start; notifications wait in the outbox:', err instanceof Error ? err.message : err);
		return null;
	});
	return store[KEY];
}

/** The running runtime, if any (the development mailbox page). */
export async function mailRuntime(): Promise<MailRuntime | null> {
	return (await store[KEY]) ?? null;
}

export async function stopMailSender(): Promise<void> {
	const runtime = await store[KEY];
	delete store[KEY];
	if (!runtime) return;
	await runtime.sender.stop();
	runtime.transport.close();
	await runtime.capture?.close();
}
