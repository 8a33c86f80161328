import { error, fail } from '@sveltejs/kit';
import { z } from 'zod';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { relyingParty } from '$lib/server/auth/passkey';
import { AuthError } from '$lib/server/auth/errors';
import { readSignatureCredentials, signingContext } from '$lib/server/signatures/credentials';
import { buildBatchView, loadBatchRecords } from '$lib/server/batches/query';
import { recordStepEntry } from '$lib/server/batches/entries';
import { verifyStep } from '$lib/server/batches/verify';
import { isExecutionError } from '$lib/server/batches/errors';
import { getPreferences } from '$lib/server/batches/preferences';
import { getExecutionSettings, listReasonCodes } from '$lib/server/batches/settings';
import { hasPermission } from '$lib/domain/permissions';
import { getConfig } from '$lib/server/config';
import { blobLimits } from '$lib/server/blobs/policy';
import type { Template } from '$lib/schemas/template';
import { listStepRuns } from '$lib/server/batches/runs';
import { entryValuesSchema } from '$lib/server/batches/http';
import { ENTRY_BODY_MAX_BYTES, readCappedForm } from '$lib/server/batches/body';
import { clientAddress } from '$lib/server/auth/request';
import { messagesFor, type Locale } from '$lib/i18n';

export const load = (async (event) => {
	const user = requirePermission(event, 'batch.read');
	const records = await loadBatchRecords(database.db, event.params.id);
	if (!records) error(404, { message: 'There is no such batch.' });
	const view = await buildBatchView(database.db, records);
	const step = view.sections.flatMap((s) => s.steps).find((s) => s.key === event.params.stepKey);
	if (!step) error(404, { message: 'This batch has no such step.' });
	const template = records.template as Template;
	// A freeze-drying step shows the runs uploaded for it, with their analysis (issue 7).
	const takesRun = step.fields.some((f) => f.kind === 'recipe');
	return {
		batch: { id: view.id, number: view.number, status: view.status, version: view.version, batchSize: view.batchSize, product: view.product },
		step,
		// The frozen template and the values in force: what the browser's live checks judge against.
		template,
		steps: view.sections.flatMap((s) => s.steps.map((x) => ({ key: x.key, label: x.label, title: x.title, values: x.current?.values ?? {} }))),
		reasons: await listReasonCodes(database.db),
		preferences: await getPreferences(database.db, user.id),
		signing: await signingContext(database.db, user, event.locals.session),
		user: { id: user.id, name: user.name },
		canExecute: hasPermission(user.roles, 'batch.execute') && step.roles.some((r) => user.roles.includes(r as never)),
		canVerify: hasPermission(user.roles, 'batch.verify'),
		runs: takesRun ? await listStepRuns(database.db, { batchId: view.id, stepKey: step.key, deviations: step.deviations }) : [],
		canUploadRun: takesRun && hasPermission(user.roles, 'cycle.upload'),
		canReadRuns: hasPermission(user.roles, 'cycle.read'),
		lateEntryMinutes: (await getExecutionSettings(database.db)).lateEntryMinutes,
		uploads: blobLimits(),
		timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE
	};
}) satisfies PageServerLoad;

const payloadSchema = z.object({
	values: entryValuesSchema.default({}),
	comment: z.string().max(2000).optional(),
	reasonCode: z.string().max(40).optional(),
	workedAt: z.string().max(40).optional(),
	version: z.number().int().positive()
});

/**
 * A refusal for the SignDialog: execution codes in the person's language from the catalogue
 * (m.batches.errors), the server's wording only for a code it has no message for; the
 * ceremony's own codes the dialog translates itself (m.auth.errors).
 */
function refused(err: unknown, locale: Locale) {
	if (isExecutionError(err)) return fail(err.status, { signError: messagesFor(locale).batches.errors[err.code] ?? err.message, code: `batch-${err.code}`, issues: err.issues });
	if (err instanceof AuthError) return fail(err.status, { signError: err.message, code: err.code });
	throw err;
}

function readPayload(form: FormData) {
	try {
		return payloadSchema.safeParse(JSON.parse(String(form.get('payload') ?? '{}')));
	} catch {
		return payloadSchema.safeParse(null);
	}
}

export const actions = {
	enter: async (event) => {
		const user = requirePermission(event, 'batch.execute');
		const m = messagesFor(event.locals.locale);
		let form: FormData;
		try {
			// Capped before it is parsed: formData() alone would buffer any size.
			form = await readCappedForm(event.request, ENTRY_BODY_MAX_BYTES);
		} catch (err) {
			return refused(err, event.locals.locale);
		}
		const parsed = readPayload(form);
		if (!parsed.success) return fail(400, { signError: m.batches.errors['invalid-input'], code: 'batch-invalid-input' });
		try {
			const credentials = readSignatureCredentials(form);
			const r = await recordStepEntry(database.db, {
				user,
				session: event.locals.session,
				address: clientAddress(event),
				relyingParty: relyingParty(event.url),
				batchId: event.params.id,
				stepKey: event.params.stepKey,
				values: parsed.data.values,
				comment: parsed.data.comment,
				reasonCode: parsed.data.reasonCode || undefined,
				workedAt: parsed.data.workedAt || undefined,
				expectedVersion: parsed.data.version,
				credentials
			});
			return { saved: true, deviations: r.deviations };
		} catch (err) {
			return refused(err, event.locals.locale);
		}
	},
	verify: async (event) => {
		const user = requirePermission(event, 'batch.verify');
		let form: FormData;
		try {
			form = await readCappedForm(event.request, ENTRY_BODY_MAX_BYTES);
		} catch (err) {
			return refused(err, event.locals.locale);
		}
		const parsed = readPayload(form);
		if (!parsed.success) return fail(400, { signError: messagesFor(event.locals.locale).batches.errors['invalid-input'], code: 'batch-invalid-input' });
		try {
			await verifyStep(database.db, {
				user,
				session: event.locals.session,
				address: clientAddress(event),
				relyingParty: relyingParty(event.url),
				batchId: event.params.id,
				stepKey: event.params.stepKey,
				expectedVersion: parsed.data.version,
				credentials: readSignatureCredentials(form)
			});
			return { verified: true };
		} catch (err) {
			return refused(err, event.locals.locale);
		}
	}
} satisfies Actions;
