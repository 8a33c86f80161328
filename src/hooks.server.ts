import { randomUUID } from 'node:crypto';
import type { Handle, HandleServerError, ServerInit } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { getConfig } from '$lib/server/config';
import { database } from '$lib/server/db';
import { prepareDatabase } from '$lib/server/startup';
import { ensureCheckpointSchedule } from '$lib/server/audit/schedule';
import { ensureSigningKey } from '$lib/server/audit/checkpoint';
import { ensureMailSender, stopMailSender } from '$lib/server/mail';
import { startBackupSchedule } from '$lib/server/backup/schedule';
import { startUpkeepSchedule, stopUpkeepSchedule } from '$lib/server/db/upkeep';
import { blobStore } from '$lib/server/blobs';
import { authenticate } from '$lib/server/auth/handle';
import { checkOrigin } from '$lib/server/auth/origin';
import { refuseMalformedInput } from '$lib/server/http/input';
import { isLocale, negotiateLocale } from '$lib/i18n';

export const init: ServerInit = async () => {
	// A port already in use surfaces as an uncaught 'listen' error from adapter-node's server.
	process.on('uncaughtException', (err: NodeJS.ErrnoException) => {
		if (err.code === 'EADDRINUSE') {
			console.error(`Rimebook cannot start: port ${getConfig().PORT} is already in use. Fix: stop the other program or set PORT to a free port.`);
		} else {
			console.error('Rimebook stopped on an unexpected error:', err);
		}
		process.exit(1);
	});
	try {
		const config = getConfig();
		const { seeded } = await prepareDatabase(database);
		// The site's checkpoint key exists (and its creation is audited) before anyone asks for it.
		await ensureSigningKey(database.db);
		const where = database.kind === 'pglite' ? `PGlite in ${config.RIMEBOOK_DATA_DIR}` : 'PostgreSQL server';
		console.log(`[rimebook] database ready (${where})${seeded ? '; demo scenario seeded' : ''}`);
		// Signed ledger checkpoints at intervals (design.md, "The audit ledger"), off the request path.
		ensureCheckpointSchedule(database.db);
		// E-mail notifications from the outbox, off the request path too (never blocks a GMP action).
		void ensureMailSender(database.db, config);
		// Scheduled backups to RIMEBOOK_BACKUP_DIR (Annex 11 §7.2), when the site set a folder.
		if (startBackupSchedule(database, { store: blobStore(), migrationsFolder: config.RIMEBOOK_MIGRATIONS_DIR })) console.log('[rimebook] scheduled backups on');
		// PGlite runs no autovacuum: keep its planner statistics and hint bits current (db/upkeep.ts).
		startUpkeepSchedule(database);
	} catch (err) {
		console.error(err instanceof Error ? err.message : err);
		process.exit(1);
	}
	// adapter-node emits this on SIGTERM/SIGINT; an open PGlite would keep the process alive.
	process.once('sveltekit:shutdown' as never, () => {
		void Promise.allSettled([stopUpkeepSchedule(database), stopMailSender()]).finally(() => database.close());
	});
};

const requestId: Handle = ({ event, resolve }) => {
	event.locals.requestId = randomUUID();
	return resolve(event);
};

const locale: Handle = ({ event, resolve }) => {
	const preferred = event.locals.user?.locale;
	event.locals.locale = isLocale(preferred) ? preferred : negotiateLocale(event.request.headers.get('accept-language'));
	return resolve(event, {
		transformPageChunk: ({ html }) => html.replace('%lang%', event.locals.locale)
	});
};

const securityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	const h = response.headers;
	h.set('X-Content-Type-Options', 'nosniff');
	h.set('Referrer-Policy', 'same-origin');
	h.set('X-Frame-Options', 'DENY');
	h.set('Cross-Origin-Opener-Policy', 'same-origin');
	h.set('Permissions-Policy', 'camera=(self), microphone=(), geolocation=()');
	h.set('X-Request-Id', event.locals.requestId);
	if (event.url.pathname.startsWith('/api/')) h.set('Cache-Control', 'no-store');
	return response;
};

export const handle = sequence(requestId, checkOrigin, authenticate, locale, securityHeaders, refuseMalformedInput);

export const handleError: HandleServerError = ({ error, event, status, message }) => {
	if (status !== 404) console.error(`[${event.locals.requestId}] ${event.request.method} ${event.url.pathname}:`, error);
	return { message: status === 404 ? 'Not found' : message, requestId: event.locals.requestId };
};
