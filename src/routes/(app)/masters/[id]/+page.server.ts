import { error, fail, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad, RequestEvent } from './$types';
import { database } from '$lib/server/db';
import { getConfig } from '$lib/server/config';
import { requirePermission, requireSession } from '$lib/server/auth/guard';
import { relyingParty } from '$lib/server/auth/passkey';
import { clientAddress } from '$lib/server/auth/request';
import type { Permission } from '$lib/domain/permissions';
import { readSignatureCredentials, signingContext } from '$lib/server/signatures/credentials';
import { getMasterDetail, listMasters } from '$lib/server/masters/query';
import { approveMaster, createNewVersion, makeEffective, retireMaster, returnMaster, submitMaster } from '$lib/server/masters/lifecycle';
import { permissionsOfUser } from '$lib/server/masters/access';
import { masterFailure } from '$lib/server/masters/http';
import { listAvailableActions } from '$lib/domain/master-lifecycle';
import { hashTemplate } from '$lib/domain/template';

export const load = (async (event) => {
	const user = requirePermission(event, 'master.read');
	const db = database.db;
	const detail = await getMasterDetail(db, event.params.id);
	if (!detail) error(404, { message: 'No such master record.' });
	const { authorIds, ...master } = detail;
	const isAuthor = authorIds.includes(user.id);
	const actions = listAvailableActions(detail.status, { permissions: permissionsOfUser(user, ['master.read', 'master.author', 'master.approve', 'master.return', 'batch.issue']), isAuthor });
	const versions = (await listMasters(db, { code: detail.code })).map((v) => ({ id: v.id, version: v.version, status: v.status }));
	return {
		master,
		actions,
		versions,
		intact: hashTemplate(detail.template) === detail.templateHash,
		signing: user.kind === 'person' ? await signingContext(db, user, event.locals.session) : null,
		signerName: user.name,
		timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE
	};
}) satisfies PageServerLoad;

/** The permission first (a role without it learns nothing), then the form, then one service. */
async function signed(event: RequestEvent, permission: Permission, work: (input: Parameters<typeof submitMaster>[1]) => Promise<void>, done: string) {
	const { user, session } = requireSession(event, permission);
	const form = await event.request.formData();
	try {
		const credentials = readSignatureCredentials(form);
		await work({ user, session, credentials, address: clientAddress(event), relyingParty: relyingParty(event.url), id: event.params.id });
	} catch (err) {
		return masterFailure(err, event.locals.locale);
	}
	return { done };
}

async function reasoned(event: RequestEvent, permission: Permission, work: (reason: string) => Promise<unknown>, done: string) {
	requirePermission(event, permission);
	const reason = String((await event.request.formData()).get('reason') ?? '').trim();
	if (reason.length > 500) return fail(400, { code: 'invalid', message: 'The reason is longer than 500 characters.', issues: [] });
	try {
		await work(reason);
	} catch (err) {
		return masterFailure(err);
	}
	return { done };
}

export const actions = {
	submit: (event) => signed(event, 'master.author', (input) => submitMaster(database.db, input), 'submitted'),
	approve: (event) => signed(event, 'master.approve', (input) => approveMaster(database.db, input), 'approved'),
	return: (event) => reasoned(event, 'master.return', (reason) => returnMaster(database.db, event.locals.user!, event.params.id, reason), 'returned'),
	makeEffective: (event) => reasoned(event, 'master.approve', (reason) => makeEffective(database.db, event.locals.user!, event.params.id, reason || null), 'effective'),
	retire: (event) => reasoned(event, 'master.approve', (reason) => retireMaster(database.db, event.locals.user!, event.params.id, reason), 'retired'),
	newVersion: async (event) => {
		const user = requirePermission(event, 'master.author');
		let id: string;
		try {
			({ id } = await createNewVersion(database.db, user, event.params.id));
		} catch (err) {
			return masterFailure(err);
		}
		redirect(303, `/masters/${id}/edit`);
	}
} satisfies Actions;
