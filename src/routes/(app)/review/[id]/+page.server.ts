import { error, fail } from '@sveltejs/kit';
import { z } from 'zod';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { relyingParty } from '$lib/server/auth/passkey';
import { clientAddress } from '$lib/server/auth/request';
import { AuthError } from '$lib/server/auth/errors';
import { readSignatureCredentials, signingContext } from '$lib/server/signatures/credentials';
import { buildReviewView, disposeBatch, isReviewError, loadReviewRecords, markReviewed } from '$lib/server/review';
import { describeGates, REVIEW_BODY_MAX_BYTES } from '$lib/server/review/http';
import { readCappedForm } from '$lib/server/batches/body';
import { isExecutionError } from '$lib/server/batches/errors';
import { getPreferences } from '$lib/server/batches/preferences';
import { getConfig } from '$lib/server/config';
import { hasPermission } from '$lib/domain/permissions';
import { messagesFor, type Locale } from '$lib/i18n';

export const load = (async (event) => {
	const user = requirePermission(event, 'review.perform');
	const r = await loadReviewRecords(database.db, event.params.id);
	if (!r) error(404, { message: 'There is no such batch.' });
	const view = await buildReviewView(database.db, r, user);
	return {
		review: view,
		releaseReasons: describeGates(view.release.reasons, event.locals.locale, view.items),
		rejectReasons: describeGates(view.reject.reasons, event.locals.locale, view.items),
		canDecide: hasPermission(user.roles, 'batch.release'),
		signing: await signingContext(database.db, user, event.locals.session),
		user: { id: user.id, name: user.name },
		preferences: await getPreferences(database.db, user.id),
		timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE
	};
}) satisfies PageServerLoad;

/** A refusal in the person's language: the gates one by one, else the catalogue's word for the code. */
function refused(err: unknown, locale: Locale) {
	const m = messagesFor(locale).review;
	if (isReviewError(err)) {
		const text = err.reasons.length > 0 ? describeGates(err.reasons, locale).join(' ') : (m.errors[err.code] ?? err.message);
		return fail(err.status, { signError: text, code: `review-${err.code}` });
	}
	if (isExecutionError(err)) return fail(err.status, { signError: err.message, code: `batch-${err.code}` });
	if (err instanceof AuthError) return fail(err.status, { signError: err.message, code: err.code });
	throw err;
}

const markSchema = z.object({ itemKey: z.string().min(1).max(200), itemHash: z.string().min(1).max(128), comment: z.string().max(2000).optional() });
const decideSchema = z.object({ comment: z.string().max(2000).optional(), version: z.coerce.number().int().positive() });

async function decide(event: Parameters<Actions[string]>[0], decision: 'released' | 'rejected') {
	const user = requirePermission(event, 'batch.release');
	let form: FormData;
	try {
		form = await readCappedForm(event.request, REVIEW_BODY_MAX_BYTES);
	} catch (err) {
		return refused(err, event.locals.locale);
	}
	const parsed = decideSchema.safeParse({ comment: form.get('comment') ?? undefined, version: form.get('version') });
	if (!parsed.success) return fail(400, { signError: messagesFor(event.locals.locale).review.errors['invalid-input'], code: 'review-invalid-input' });
	try {
		const result = await disposeBatch(database.db, {
			user,
			session: event.locals.session,
			address: clientAddress(event),
			relyingParty: relyingParty(event.url),
			batchId: event.params.id!,
			decision,
			comment: parsed.data.comment,
			expectedVersion: parsed.data.version,
			credentials: readSignatureCredentials(form)
		});
		return { decided: result.decision };
	} catch (err) {
		return refused(err, event.locals.locale);
	}
}

export const actions = {
	mark: async (event) => {
		const user = requirePermission(event, 'review.perform');
		let form: FormData;
		try {
			form = await readCappedForm(event.request, REVIEW_BODY_MAX_BYTES);
		} catch (err) {
			return refused(err, event.locals.locale);
		}
		const parsed = markSchema.safeParse({ itemKey: form.get('itemKey'), itemHash: form.get('itemHash'), comment: form.get('comment') ?? undefined });
		if (!parsed.success) return fail(400, { markError: messagesFor(event.locals.locale).review.errors['invalid-input'], itemKey: null });
		try {
			await markReviewed(database.db, user, { batchId: event.params.id, ...parsed.data });
			return { marked: parsed.data.itemKey };
		} catch (err) {
			if (isReviewError(err)) return fail(err.status, { markError: messagesFor(event.locals.locale).review.errors[err.code] ?? err.message, itemKey: parsed.data.itemKey });
			throw err;
		}
	},
	release: (event) => decide(event, 'released'),
	reject: (event) => decide(event, 'rejected')
} satisfies Actions;
