import { error, fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { getConfig } from '$lib/server/config';
import { requirePermission, requireSession } from '$lib/server/auth/guard';
import { relyingParty } from '$lib/server/auth/passkey';
import { clientAddress } from '$lib/server/auth/request';
import { readSignatureCredentials, signingContext } from '$lib/server/signatures/credentials';
import { getPreferences } from '$lib/server/batches/preferences';
import { getDeviation, transitionDeviation, updateDeviation } from '$lib/server/deviations';
import { isLatestSignatureBound, permissionsOfDeviationUser } from '$lib/server/deviations/workflow';
import { deviationFailure, fieldsSchema, readDeviationForm, transitionNames } from '$lib/server/deviations/http';
import { listAvailableDeviationActions, listMissingForSubmission, type DeviationTransition } from '$lib/domain/deviation-lifecycle';
import type { Template } from '$lib/schemas/template';
import { eq } from 'drizzle-orm';
import { batch } from '$lib/server/db/schema';
import { messagesFor } from '$lib/i18n';

export const load = (async (event) => {
	const user = requirePermission(event, 'deviation.read');
	const db = database.db;
	const d = await getDeviation(db, event.params.id);
	if (!d) error(404, { message: 'No such deviation.' });
	const { events, signatures, investigators, ...deviation } = d;
	const actions = listAvailableDeviationActions({ ...deviation, investigators }, { id: user.id, permissions: permissionsOfDeviationUser(user) });
	return {
		deviation,
		events,
		signatures,
		// 11.70: the page says whether the latest signature still matches the record as shown.
		latestSignatureBound: isLatestSignatureBound(d),
		actions,
		missing: listMissingForSubmission(deviation),
		stepTitle: await stepTitleOf(deviation.batchId, deviation.stepKey),
		signing: user.kind === 'person' ? await signingContext(db, user, event.locals.session) : null,
		signerName: user.name,
		preferences: await getPreferences(db, user.id),
		timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE
	};
}) satisfies PageServerLoad;

async function stepTitleOf(batchId: string | null, stepKey: string | null): Promise<string | null> {
	if (!batchId || !stepKey) return null;
	const [row] = await database.db.select({ snapshot: batch.snapshot }).from(batch).where(eq(batch.id, batchId));
	const t = row?.snapshot as Partial<Template> | undefined;
	return t?.sections?.flatMap((s) => s.steps).find((s) => s.key === stepKey)?.title ?? null;
}

function text(form: FormData, name: string): string | null {
	const v = form.get(name);
	return typeof v === 'string' ? v : null;
}

export const actions = {
	/** Field edits before submission: audited with old and new values, no signature (11.10(e)). */
	edit: async (event) => {
		const user = requirePermission(event, 'deviation.raise');
		try {
			const form = await readDeviationForm(event.request);
			const version = Number(text(form, 'version'));
			const capa = text(form, 'capaRefs');
			const raw = {
				title: text(form, 'title') ?? undefined,
				description: text(form, 'description') ?? undefined,
				classification: form.has('classification') ? text(form, 'classification') || null : undefined,
				immediateAction: text(form, 'immediateAction') ?? undefined,
				investigation: text(form, 'investigation') ?? undefined,
				rootCause: text(form, 'rootCause') ?? undefined,
				impact: text(form, 'impact') ?? undefined,
				capaRefs: capa === null ? undefined : capa.split(/\r?\n/).map((s) => s.trim()).filter(Boolean)
			};
			const parsed = fieldsSchema.safeParse(raw);
			if (!parsed.success || !Number.isInteger(version) || version < 1) {
				const message = messagesFor(event.locals.locale).deviations.errors['invalid-input'];
				return fail(400, { code: 'deviation.invalid-input', message, missing: [], signError: message });
			}
			const result = await updateDeviation(database.db, user, { id: event.params.id, expectedVersion: version, fields: parsed.data });
			return { saved: true, changed: result.changed };
		} catch (err) {
			return deviationFailure(err, event.locals.locale);
		}
	},
	/** One signed step of the lifecycle; the service checks the step's own permission (deviation.approve for QA's). */
	transition: async (event) => {
		const { user, session } = requireSession(event, 'deviation.raise');
		try {
			const form = await readDeviationForm(event.request);
			const action = text(form, 'transition');
			if (!(transitionNames as readonly string[]).includes(action ?? '')) {
				const message = messagesFor(event.locals.locale).deviations.errors['invalid-input'];
				return fail(400, { code: 'deviation.invalid-input', message, missing: [], signError: message });
			}
			await transitionDeviation(database.db, {
				id: event.params.id,
				action: action as DeviationTransition,
				expectedVersion: Number(text(form, 'version')),
				reason: text(form, 'reason')?.slice(0, 2000),
				closureComment: text(form, 'closureComment')?.slice(0, 5000),
				user,
				session,
				credentials: readSignatureCredentials(form),
				address: clientAddress(event),
				relyingParty: relyingParty(event.url)
			});
			return { done: action };
		} catch (err) {
			return deviationFailure(err, event.locals.locale);
		}
	}
} satisfies Actions;
