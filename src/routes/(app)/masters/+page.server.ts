import { fail, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { hasPermission } from '$lib/domain/permissions';
import { listMasters } from '$lib/server/masters/query';
import { importMaster } from '$lib/server/masters/lifecycle';
import { masterFailure, readFormCapped } from '$lib/server/masters/http';
import { readImportText } from '$lib/server/masters/import';

export const load = (async (event) => {
	const user = requirePermission(event, 'master.read');
	return { masters: await listMasters(database.db), canAuthor: hasPermission(user.roles, 'master.author') };
}) satisfies PageServerLoad;

const MAX_IMPORT_BYTES = 2_000_000;
// The whole multipart body is capped before it is parsed: the file plus room for its headers.
const MAX_IMPORT_FORM_BYTES = MAX_IMPORT_BYTES + 64_000;

export const actions = {
	/** Imports a template file as a new draft; every problem is listed, nothing saved if there is one. */
	import: async (event) => {
		const user = requirePermission(event, 'master.author');
		let form: FormData;
		try {
			form = await readFormCapped(event.request, MAX_IMPORT_FORM_BYTES);
		} catch (err) {
			return masterFailure(err);
		}
		const file = form.get('file');
		if (!(file instanceof File) || file.size === 0) return fail(400, { code: 'invalid', message: 'Choose a file.', issues: [] });
		if (file.size > MAX_IMPORT_BYTES) return fail(413, { code: 'too-large', message: 'The file is larger than 2 MB.', issues: [] });
		const read = readImportText(await file.text());
		if (!read.ok) return fail(400, { code: 'invalid', message: `The file has ${read.issues.length} problem(s); nothing was saved.`, issues: read.issues });
		let created: { id: string };
		try {
			created = await importMaster(database.db, user, read.template, `Imported from ${file.name}`);
		} catch (err) {
			return masterFailure(err);
		}
		redirect(303, `/masters/${created.id}?done=imported`);
	}
} satisfies Actions;
