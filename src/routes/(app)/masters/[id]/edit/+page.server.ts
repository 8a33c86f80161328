import { error, fail, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { findMaster } from '$lib/server/masters/query';
import { saveDraft } from '$lib/server/masters/lifecycle';
import { masterFailure, readFormCapped } from '$lib/server/masters/http';
import type { Template } from '$lib/schemas/template';

export const load = (async (event) => {
	requirePermission(event, 'master.author');
	const row = await findMaster(database.db, event.params.id);
	if (!row) error(404, { message: 'No such master record.' });
	// Only a draft is edited (an approved version never changes): anything else opens read-only.
	if (row.status !== 'draft') redirect(303, `/masters/${row.id}`);
	return { id: row.id, code: row.code, version: row.version, revision: row.revision, template: row.template as Template };
}) satisfies PageServerLoad;

const MAX_TEMPLATE_CHARS = 2_000_000;
// The body is capped before parsing: 2 M characters are at most 6 MB as UTF-8 (3 bytes per BMP
// character; an astral pair is 2 characters, 4 bytes), plus the revision and multipart headers.
const MAX_SAVE_BODY_BYTES = 3 * MAX_TEMPLATE_CHARS + 64_000;

export const actions = {
	/** Saves the whole template; the server validates it again and names every issue if refused. */
	save: async (event) => {
		const user = requirePermission(event, 'master.author');
		let form: FormData;
		try {
			form = await readFormCapped(event.request, MAX_SAVE_BODY_BYTES);
		} catch (err) {
			return masterFailure(err);
		}
		const text = form.get('template');
		const revision = Number(form.get('revision'));
		if (typeof text !== 'string' || text.length > MAX_TEMPLATE_CHARS || !Number.isInteger(revision)) return fail(400, { code: 'invalid', message: 'The form is incomplete.', issues: [] });
		let template: unknown;
		try {
			template = JSON.parse(text);
		} catch {
			return fail(400, { code: 'invalid', message: 'The template is not JSON.', issues: [] });
		}
		try {
			const saved = await saveDraft(database.db, user, event.params.id, { template, revision });
			return { revision: saved.revision, templateHash: saved.templateHash };
		} catch (err) {
			return masterFailure(err);
		}
	}
} satisfies Actions;
