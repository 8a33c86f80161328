import { error } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { requirePermission } from '$lib/server/auth/guard';
import { database } from '$lib/server/db';
import { getConfig } from '$lib/server/config';
import { getSiteInfo } from '$lib/server/site/settings';
import { renderBatchRecordPdf } from '$lib/server/pdf';
import { isLocale } from '$lib/i18n';

/**
 * GET /api/batches/<id>/record.pdf → the executed batch record as a signed PDF with its
 * electronic original attached (21 CFR 211.188, 11.10(b) copies in human-readable form, 11.50).
 * The print itself is recorded in the audit trail.
 */
export const GET: RequestHandler = async (event) => {
	const user = requirePermission(event, 'batch.read');
	const site = await getSiteInfo(database.db);
	const locale = isLocale(event.locals.locale) ? event.locals.locale : 'en';
	const pdf = await renderBatchRecordPdf({ db: database.db, actor: { id: user.id, name: user.name }, site: { name: site.name, timeZone: getConfig().RIMEBOOK_SITE_TIMEZONE }, locale }, event.params.id);
	if (!pdf) error(404, { message: 'There is no such batch.' });
	return new Response(new Uint8Array(pdf.bytes), {
		headers: {
			'Content-Type': 'application/pdf',
			'Content-Disposition': `attachment; filename="${pdf.filename}"`,
			'Cache-Control': 'no-store'
		}
	});
};
