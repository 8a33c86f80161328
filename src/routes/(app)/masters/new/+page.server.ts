import { fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { createMaster } from '$lib/server/masters/lifecycle';
import { masterFailure, readFormCapped, stringFields } from '$lib/server/masters/http';
import { TEMPLATE_SCHEMA_VERSION, type TemplateInput } from '$lib/schemas/template';

export const load = (async (event) => {
	requirePermission(event, 'master.author');
	return {};
}) satisfies PageServerLoad;

const num = z.coerce.number().positive();
const newMasterSchema = z.object({
	productName: z.string().trim().min(1).max(200),
	productCode: z.string().trim().min(1).max(40),
	strength: z.string().trim().min(1).max(100),
	dosageForm: z.string().trim().min(1).max(200),
	batchSize: num,
	batchSizeUnit: z.string().trim().min(1).max(40),
	theoreticalYield: num,
	yieldUnit: z.string().trim().min(1).max(40)
});

// Eight short fields: anything near this is not the form.
const MAX_NEW_FORM_BYTES = 64_000;

/** The smallest valid template for a product: one section with one step, to be built in the editor. */
function starterTemplate(input: z.infer<typeof newMasterSchema>): TemplateInput {
	return {
		schemaVersion: TEMPLATE_SCHEMA_VERSION,
		header: {
			productName: input.productName,
			productCode: input.productCode,
			strength: input.strength,
			dosageForm: input.dosageForm,
			batchSize: { value: input.batchSize, unit: input.batchSizeUnit, min: input.batchSize, max: input.batchSize },
			theoreticalYield: { value: input.theoreticalYield, unit: input.yieldUnit, minPercent: 90, maxPercent: 100 },
			version: 1,
			status: 'draft'
		},
		sections: [{ key: 'preparation', title: 'Preparation', steps: [{ key: 'line_clearance', title: 'Line clearance', instructions: '', roles: ['operator'], fields: [] }] }]
	};
}

export const actions = {
	default: async (event) => {
		const user = requirePermission(event, 'master.author');
		let body: FormData;
		try {
			body = await readFormCapped(event.request, MAX_NEW_FORM_BYTES);
		} catch (err) {
			return masterFailure(err);
		}
		// Only the form's own string fields, parsed and echoed back when refused (never a File).
		const form = stringFields(body, Object.keys(newMasterSchema.shape));
		const parsed = newMasterSchema.safeParse(form);
		if (!parsed.success) {
			const issues = parsed.error.issues.map((i) => ({ path: i.path.map(String), code: `schema.${i.code}`, message: i.message }));
			return fail(400, { code: 'invalid', message: 'Some fields are missing or wrong.', issues, values: form });
		}
		let id: string;
		try {
			({ id } = await createMaster(database.db, user, starterTemplate(parsed.data)));
		} catch (err) {
			const failure = masterFailure(err);
			return fail(failure.status, { ...failure.data, values: form });
		}
		redirect(303, `/masters/${id}/edit`);
	}
} satisfies Actions;
