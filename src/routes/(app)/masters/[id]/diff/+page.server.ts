import { error } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { findMaster, listMasters } from '$lib/server/masters/query';
import { diffTemplates } from '$lib/domain/template-diff';
import type { Template } from '$lib/schemas/template';

export const load = (async (event) => {
	requirePermission(event, 'master.read');
	const db = database.db;
	const row = await findMaster(db, event.params.id);
	if (!row) error(404, { message: 'No such master record.' });
	const versions = (await listMasters(db, { code: row.code })).map((v) => ({ id: v.id, version: v.version, status: v.status }));
	// Any two versions of the product; by default the one this version was copied from, else the one before.
	const againstId = event.url.searchParams.get('against') ?? row.basedOnId ?? versions.find((v) => v.version < row.version)?.id ?? null;
	const other = againstId ? await findMaster(db, againstId) : null;
	if (againstId && (!other || other.code !== row.code)) error(404, { message: 'No such version of this master record.' });
	const [older, newer] = other && other.version > row.version ? [row, other] : [other, row];
	return {
		id: row.id,
		code: row.code,
		versions,
		older: older ? { id: older.id, version: older.version, status: older.status, templateHash: older.templateHash } : null,
		newer: { id: newer!.id, version: newer!.version, status: newer!.status, templateHash: newer!.templateHash },
		diff: older ? diffTemplates(older.template as Template, newer!.template as Template) : null
	};
}) satisfies PageServerLoad;
