import { error } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { getConfig } from '$lib/server/config';
import { getSiteInfo } from '$lib/server/site/settings';
import { parseTrailQuery } from '$lib/server/audit/trail';
import { startExport } from '$lib/server/audit/export';

/** GET /api/audit/export?format=jsonl|csv&<filters> → a streamed, signed export (itself audited). */
export const GET: RequestHandler = async (event) => {
	const user = requirePermission(event, 'audit.export');
	const params = new URLSearchParams(event.url.searchParams);
	const format = params.get('format') ?? 'jsonl';
	if (format !== 'jsonl' && format !== 'csv') error(400, { message: 'format must be jsonl or csv.' });
	params.delete('format');
	const parsed = parseTrailQuery(params);
	if (!parsed.success) error(400, { message: 'The filter is not valid.', issues: parsed.error.issues.map((i) => ({ path: i.path.join('.'), message: i.message })) });
	const { limit: _limit, cursor: _cursor, ...filter } = parsed.data;
	const site = await getSiteInfo(database.db);
	const { stream, filename } = await startExport({ db: database.db, actor: { id: user.id, name: user.name }, filter, format, site: { name: site.name, timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE } });
	return new Response(stream, {
		headers: {
			'Content-Type': format === 'jsonl' ? 'application/jsonl; charset=utf-8' : 'text/csv; charset=utf-8',
			'Content-Disposition': `attachment; filename="${filename}"`
		}
	});
};
