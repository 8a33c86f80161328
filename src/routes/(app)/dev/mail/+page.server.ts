import { error } from '@sveltejs/kit';
import { desc } from 'drizzle-orm';
import type { PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { mailOutbox } from '$lib/server/db/schema';
import { requirePermission } from '$lib/server/auth/guard';
import { getConfig } from '$lib/server/config';
import { mailRuntime } from '$lib/server/mail/runtime';

/**
 * The development mailbox: what the local SMTP server received, and the outbox. It does not
 * exist in production (404 for everyone there), and elsewhere only administrators see it.
 */
export const load = (async (event) => {
	if (getConfig().NODE_ENV === 'production') error(404, 'Not found');
	requirePermission(event, 'settings.manage');
	const runtime = await mailRuntime();
	const outbox = await database.db
		.select({ id: mailOutbox.id, kind: mailOutbox.kind, toAddress: mailOutbox.toAddress, subject: mailOutbox.subject, status: mailOutbox.status, attempts: mailOutbox.attempts, lastError: mailOutbox.lastError, createdAt: mailOutbox.createdAt, sentAt: mailOutbox.sentAt })
		.from(mailOutbox)
		.orderBy(desc(mailOutbox.createdAt))
		.limit(100);
	return { received: runtime?.capture ? runtime.capture.messages.slice(0, 100) : null, outbox, timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE };
}) satisfies PageServerLoad;
