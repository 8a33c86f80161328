import { error } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { getConfig } from '$lib/server/config';
import { getSiteInfo } from '$lib/server/site/settings';
import { parseTrailQuery } from '$lib/server/audit/trail';
import { renderAuditReportPdf } from '$lib/server/pdf';
import { isLocale } from '$lib/i18n';

/**
 * GET /api/audit/report.pdf?<the filters of /api/audit> → the matching events as a signed PDF for
 * inspectors (21 CFR 11.10(b), (e)), with the signed ledger checkpoint; audited like the export.
 */
export const GET: RequestHandler = async (event) => {
	const user = requirePermission(event, 'audit.export');
	const parsed = parseTrailQuery(event.url.searchParams);
	if (!parsed.success) error(400, { message: 'The filter is not valid.', issues: parsed.error.issues.map((i) => ({ path: i.path.join('.'), message: i.message })) });
	const { limit: _limit, cursor: _cursor, ...filter } = parsed.data;
	const site = await getSiteInfo(database.db);
	const locale = isLocale(event.locals.locale) ? event.locals.locale : 'en';
	const pdf = await renderAuditReportPdf({ db: database.db, actor: { id: user.id, name: user.name }, site: { name: site.name, timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE }, locale }, filter);
	return new Response(new Uint8Array(pdf.bytes), {
		headers: {
			'Content-Type': 'application/pdf',
			'Content-Disposition': `attachment; filename="${pdf.filename}"`,
			'Cache-Control': 'no-store'
		}
	});
};
