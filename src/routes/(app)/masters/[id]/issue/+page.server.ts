import { error, fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission, requireSession } from '$lib/server/auth/guard';
import { relyingParty } from '$lib/server/auth/passkey';
import { clientAddress } from '$lib/server/auth/request';
import { readSignatureCredentials, signingContext } from '$lib/server/signatures/credentials';
import { findMaster } from '$lib/server/masters/query';
import { issueBatch } from '$lib/server/masters/issue';
import { getNumberingPattern, proposeBatchNumber, setNumberingPattern, siteYear } from '$lib/server/masters/numbering';
import { masterFailure } from '$lib/server/masters/http';
import type { Template } from '$lib/schemas/template';

export const load = (async (event) => {
	const user = requirePermission(event, 'batch.issue');
	const db = database.db;
	const row = await findMaster(db, event.params.id);
	if (!row) error(404, { message: 'No such master record.' });
	return {
		master: { id: row.id, code: row.code, version: row.version, status: row.status, templateHash: row.templateHash, template: row.template as Template },
		proposed: await proposeBatchNumber(db, row.code),
		pattern: await getNumberingPattern(db),
		year: siteYear(),
		signing: user.kind === 'person' ? await signingContext(db, user, event.locals.session) : null,
		signerName: user.name
	};
}) satisfies PageServerLoad;

export const actions = {
	/** Issues the batch record, signed "issued" (QA): issueBatch does every check again. */
	issue: async (event) => {
		const { user, session } = requireSession(event, 'batch.issue');
		const form = await event.request.formData();
		const batchSize = Number(form.get('batchSize'));
		const batchNumber = String(form.get('batchNumber') ?? '').trim() || undefined;
		try {
			const credentials = readSignatureCredentials(form);
			const issued = await issueBatch(database.db, { user, session, masterRecordId: event.params.id, batchNumber, batchSize, credentials, address: clientAddress(event), relyingParty: relyingParty(event.url) });
			return { issued };
		} catch (err) {
			return masterFailure(err, event.locals.locale);
		}
	},
	/** Changes the site's numbering pattern (QA, with a reason; audited). */
	numbering: async (event) => {
		const user = requirePermission(event, 'batch.issue');
		const form = await event.request.formData();
		const pattern = String(form.get('pattern') ?? '');
		const reason = String(form.get('reason') ?? '');
		if (pattern.length > 60 || reason.length > 500) return fail(400, { code: 'invalid', message: 'Too long.', issues: [], numbering: true });
		try {
			await setNumberingPattern(database.db, user, pattern, reason);
		} catch (err) {
			const f = masterFailure(err);
			return fail(f.status, { ...f.data, numbering: true });
		}
		return { numberingSaved: true };
	}
} satisfies Actions;
