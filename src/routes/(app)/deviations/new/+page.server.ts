import { fail, redirect } from '@sveltejs/kit';
import { desc, inArray } from 'drizzle-orm';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { batch } from '$lib/server/db/schema';
import { requirePermission } from '$lib/server/auth/guard';
import { raiseManualDeviation } from '$lib/server/deviations';
import { deviationFailure, raiseBodySchema, readDeviationForm } from '$lib/server/deviations/http';
import { OPEN_BATCH_STATUSES } from '$lib/domain/batch/status';
import type { Template } from '$lib/schemas/template';
import { messagesFor } from '$lib/i18n';

const FIELDS = ['batchId', 'stepKey', 'title', 'description', 'classification', 'immediateAction'] as const;

/** The manual raise form: ?batch=<id>&step=<key> preselect what the batch page links from. */
export const load = (async (event) => {
	requirePermission(event, 'deviation.raise');
	const db = database.db;
	const batches = await db
		.select({ id: batch.id, number: batch.number, snapshot: batch.snapshot })
		.from(batch)
		.where(inArray(batch.status, [...OPEN_BATCH_STATUSES]))
		.orderBy(desc(batch.issuedAt))
		.limit(200);
	const wanted = event.url.searchParams.get('batch');
	const chosen = batches.find((b) => b.id === wanted) ?? (batches.length === 1 ? batches[0] : null);
	const steps = chosen ? ((chosen.snapshot as Template).sections ?? []).flatMap((s, i) => s.steps.map((st, j) => ({ key: st.key, label: `${i + 1}.${j + 1}`, title: st.title }))) : [];
	const step = event.url.searchParams.get('step');
	return {
		batches: batches.map((b) => ({ id: b.id, number: b.number })),
		batchId: chosen?.id ?? '',
		steps,
		stepKey: steps.some((s) => s.key === step) ? step : ''
	};
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		const user = requirePermission(event, 'deviation.raise');
		let id: string;
		let values: Record<string, string> = {};
		try {
			const form = await readDeviationForm(event.request);
			values = Object.fromEntries(FIELDS.map((f) => [f, String(form.get(f) ?? '').slice(0, 10_000)]));
			const parsed = raiseBodySchema.safeParse({ ...values, stepKey: values.stepKey || null, classification: values.classification || null, immediateAction: values.immediateAction || null });
			if (!parsed.success) {
				const message = messagesFor(event.locals.locale).deviations.errors['invalid-input'];
				return fail(400, { code: 'deviation.invalid-input', message, values, issues: parsed.error.issues.map((i) => String(i.path[0] ?? '')) });
			}
			({ id } = await raiseManualDeviation(database.db, user, parsed.data));
		} catch (err) {
			const f = deviationFailure(err, event.locals.locale);
			return fail(f.status, { ...f.data, values, issues: [] as string[] });
		}
		redirect(303, `/deviations/${id}`);
	}
} satisfies Actions;
