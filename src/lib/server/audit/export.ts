import { createPublicKey } from 'node:crypto';
import { toHex } from '$lib/domain/merkle';
import { formatInZone } from '$lib/domain/time';
import type { Database } from '../db/client';
import { runUnitOfWork } from '../work';
import type { Actor } from './ledger';
import { createCheckpoint, listSiteKeys, type SignedCheckpoint } from './checkpoint';
import { treeUpTo } from './proof';
import { isFiltered, readTrailBatch, type TrailFilter } from './trail';

/**
 * The audit trail export (21 CFR 11.10(b): accurate and complete copies in electronic form).
 *
 * JSONL, one JSON object per line:
 *   1. header {"type":"rimebook.audit-export", version, site, exportedAt, exportedBy, filter,
 *      coverage, checkpoint, publicKey}
 *   2. one {"type":"event", seq, prevHash, hash, event, proof?} per event, oldest first
 *   3. trailer {"type":"end", count}
 * `event` is the hashed payload; re-canonicalised with RFC 8785 it gives back the exact bytes, so
 * SHA-256(prevHash ‖ canonical(event)) = hash can be checked offline.
 *
 * What can be proven offline:
 * - coverage "complete" (no filter): every event 1..checkpoint.size, in order; the verifier checks
 *   each hash, each link, and recomputes the Merkle root, which must equal the signed root — so
 *   nothing was added, removed, reordered or changed up to the checkpoint.
 * - coverage "filtered": a subset. Each event carries its RFC 9162 inclusion proof against the
 *   signed root, proving it is authentic, unaltered and at its seq in the signed log. It does not
 *   prove the subset is complete (that events matching the filter were not left out); for that,
 *   export the complete trail.
 * The export first records itself (an "audit.export" event) and then signs a fresh checkpoint, so
 * the copy covers everything up to and including its own export event.
 * CSV carries the same header as `#` comment lines and the canonical payload and proof as columns.
 */
export type ExportFormat = 'jsonl' | 'csv';

export interface ExportContext {
	db: Database;
	actor: Actor;
	filter: TrailFilter;
	format: ExportFormat;
	site: { name: string; timeZone: string };
}

export async function startExport(ctx: ExportContext): Promise<{ stream: ReadableStream<Uint8Array>; checkpoint: SignedCheckpoint; filename: string }> {
	const filtered = isFiltered(ctx.filter);
	await runUnitOfWork(ctx.db, ctx.actor, (uow) => uow.audit({ action: 'audit.export', entityType: 'audit-trail', entityId: null, after: { format: ctx.format, filter: ctx.filter, coverage: filtered ? 'filtered' : 'complete' } }));
	const checkpoint = await createCheckpoint(ctx.db);
	if (!checkpoint) throw new Error('The ledger is empty.');
	const key = (await listSiteKeys(ctx.db)).find((k) => k.id === checkpoint.keyId);
	if (!key) throw new Error('The signing key of the checkpoint is missing.');
	const tree = filtered ? await treeUpTo(ctx.db, checkpoint.size) : null;
	const header = {
		type: 'rimebook.audit-export',
		version: 1,
		site: ctx.site.name,
		timeZone: ctx.site.timeZone,
		exportedAt: new Date().toISOString(),
		exportedBy: { id: ctx.actor.id, name: ctx.actor.name },
		filter: ctx.filter,
		coverage: filtered ? 'filtered' : 'complete',
		checkpoint,
		publicKey: { keyId: key.id, spkiPem: key.publicKey, spkiDerHex: toHex(new Uint8Array(createPublicKey(key.publicKey).export({ type: 'spki', format: 'der' }))) }
	};
	const encoder = new TextEncoder();
	let after = 0;
	let count = 0;
	let started = false;
	let done = false;
	const csvColumns = ['seq', 'at_utc', 'at_site', 'actor_id', 'actor_name', 'action', 'entity_type', 'entity_id', 'batch_id', 'reason', 'before', 'after', 'prev_hash', 'hash', 'canonical', 'proof'];
	const stream = new ReadableStream<Uint8Array>({
		async pull(controller) {
			if (!started) {
				started = true;
				controller.enqueue(encoder.encode(ctx.format === 'jsonl' ? `${JSON.stringify(header)}\n` : `# ${JSON.stringify(header)}\n${csvColumns.join(',')}\n`));
				return;
			}
			if (done) return;
			const rows = await readTrailBatch(ctx.db, ctx.filter, ctx.site.timeZone, after, checkpoint.size, 2000);
			let out = '';
			for (const r of rows) {
				const seq = Number(r.seq);
				const proof = tree ? tree.inclusionProof(seq - 1, checkpoint.size).map(toHex) : undefined;
				if (ctx.format === 'jsonl') {
					out += `${JSON.stringify({ type: 'event', seq, prevHash: r.prevHash, hash: r.hash, event: JSON.parse(r.canonical), proof })}\n`;
				} else {
					const cells = [seq, r.at, formatInZone(r.at, ctx.site.timeZone), r.actorId, r.actorName, r.action, r.entityType, r.entityId, r.batchId, r.reason, json(r.before), json(r.after), r.prevHash, r.hash, r.canonical, proof?.join(' ') ?? ''];
					out += `${cells.map(csvCell).join(',')}\n`;
				}
				count += 1;
				after = seq;
			}
			if (rows.length < 2000) {
				done = true;
				out += ctx.format === 'jsonl' ? `${JSON.stringify({ type: 'end', count })}\n` : `# ${JSON.stringify({ type: 'end', count })}\n`;
				controller.enqueue(encoder.encode(out));
				controller.close();
				return;
			}
			controller.enqueue(encoder.encode(out));
		}
	});
	const stamp = checkpoint.at.slice(0, 19).replace(/[:T]/g, '-');
	return { stream, checkpoint, filename: `audit-trail-${stamp}-${checkpoint.size}.${ctx.format}` };
}

function json(value: unknown): string {
	return value === null || value === undefined ? '' : JSON.stringify(value);
}

/** RFC 4180 quoting; a leading = + - @ is prefixed with ' so spreadsheets do not run it (OWASP, "CSV Injection"). */
function csvCell(value: unknown): string {
	let s = value === null || value === undefined ? '' : String(value);
	if (/^[=+\-@\t\r]/.test(s)) s = `'${s}`;
	return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}
