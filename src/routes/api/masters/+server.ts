import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { database } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { masterStatus } from '$lib/server/db/schema';
import { listMasters } from '$lib/server/masters/query';
import { importMaster } from '$lib/server/masters/lifecycle';
import { masterJsonError, readBodyCapped } from '$lib/server/masters/http';
import { readImport } from '$lib/server/masters/import';

const filterSchema = z.object({ status: z.enum(masterStatus).optional(), code: z.string().max(40).optional() });

/** Every master record version: id, code, product, version, status (master.read). */
export const GET: RequestHandler = async (event) => {
	requirePermission(event, 'master.read');
	const filter = filterSchema.safeParse(Object.fromEntries(event.url.searchParams));
	if (!filter.success) return json({ message: 'Unknown filter.', issues: filter.error.issues }, { status: 400 });
	const rows = await listMasters(database.db, filter.data);
	return json(rows.map((r) => ({ id: r.id, code: r.code, product: r.product, version: r.version, status: r.status, templateHash: r.templateHash, effectiveAt: r.effectiveAt })));
};

// The same cap as a template file imported on the masters page (2 MB), read before parsing.
const MAX_IMPORT_BODY_BYTES = 2_000_000;

/**
 * Imports a template as a new draft (master.author): an export file or a bare template in the
 * body. 201 `{ id, version, renumbered, templateHash }`, or 400 `{ message, issues }` naming every
 * problem (Annex 11, 5), 409 when the product has an open version, 413 over 2 MB (refused before it is parsed).
 */
export const POST: RequestHandler = async (event) => {
	const user = requirePermission(event, 'master.author');
	let text: string;
	try {
		text = new TextDecoder().decode(await readBodyCapped(event.request, MAX_IMPORT_BODY_BYTES));
	} catch (err) {
		return masterJsonError(err);
	}
	let body: unknown;
	try {
		body = JSON.parse(text);
	} catch {
		return json({ message: 'The body is not JSON.', issues: [{ path: [], code: 'import.not-json', message: 'the body is not JSON' }] }, { status: 400 });
	}
	const read = readImport(body);
	if (!read.ok) return json({ message: `The file has ${read.issues.length} problem(s); nothing was saved.`, issues: read.issues }, { status: 400 });
	try {
		const created = await importMaster(database.db, user, read.template, 'Imported through the API');
		return json(created, { status: 201, headers: { location: `/api/masters/${created.id}` } });
	} catch (err) {
		return masterJsonError(err);
	}
};
