import { error, json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { findMaster } from '$lib/server/masters/query';
import { exportTemplate } from '$lib/domain/template';
import type { Template } from '$lib/schemas/template';

/**
 * The whole template of one version as JSON (master.read). `?format=export` gives the export file
 * (format, content hash, template) as a download, the form POST /api/masters reads back.
 */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'master.read');
	const row = await findMaster(database.db, event.params.id);
	if (!row) error(404, { message: 'No such master record.' });
	const template = row.template as Template;
	if (event.url.searchParams.get('format') === 'export') {
		return new Response(exportTemplate(template), {
			headers: { 'content-type': 'application/json; charset=utf-8', 'content-disposition': `attachment; filename="${row.code}-v${row.version}.json"` }
		});
	}
	return json({ id: row.id, code: row.code, version: row.version, status: row.status, templateHash: row.templateHash, template });
};
