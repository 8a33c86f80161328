import { rgb } from 'pdf-lib';
import { siteTime } from '$lib/domain/pdf-layout';

export { siteTime };
import type { Messages } from '$lib/i18n';
import { MUTED, type Flow } from './layout';
import { describeChange, type AuditSection } from './model';

type Words = Messages['pdf']['audit'];

const SHARES = [7, 17, 15, 17, 16, 28] as const;
const HEAD_FILL = rgb(0.93, 0.94, 0.96);


/**
 * The audit trail as a table, oldest first (21 CFR 11.10(e): who, when, what, and the reason;
 * Annex 11, 9: readable), followed by the signed ledger checkpoint that vouches for it, so a
 * reader can check the printed events against the electronic ledger.
 */
export function drawAuditTrail(flow: Flow, audit: AuditSection, timeZone: string, w: Words): void {
	flow.text(w.events({ count: audit.total }), { color: MUTED });
	if (audit.events.length < audit.total) flow.text(w.truncated({ shown: audit.events.length, total: audit.total }), { color: MUTED });
	const head = [w.seq, w.at, w.actor, w.action, w.entity, w.change].map((text) => ({ text, bold: true, size: 7.5 }));
	flow.row(head, SHARES, { fill: HEAD_FILL });
	// Column heads again on every page of the table.
	flow.onPage = () => flow.row(head, SHARES, { fill: HEAD_FILL });
	for (const e of audit.events) {
		const change = describeChange(e.before, e.after);
		const reason = e.reason ? `${change ? `${change}\n` : ''}${e.reason}` : change;
		flow.row(
			[
				{ text: String(e.seq), size: 7.5 },
				{ text: siteTime(e.at, timeZone), size: 7.5 },
				{ text: e.actorName, size: 7.5 },
				{ text: e.action, size: 7.5 },
				{ text: e.entityId ? `${e.entityType} ${e.entityId}` : e.entityType, size: 7.5 },
				{ text: reason, size: 7.5 }
			],
			SHARES
		);
	}
	flow.onPage = null;
	drawCheckpoint(flow, audit, timeZone, w);
}

export function drawCheckpoint(flow: Flow, audit: AuditSection, timeZone: string, w: Words): void {
	flow.heading(w.checkpoint, 3);
	const c = audit.checkpoint;
	if (!c) {
		flow.text(w.noCheckpoint);
		return;
	}
	const rows: [string, string][] = [
		[w.size, String(c.size)],
		[w.root, c.root],
		[w.head, c.head.hash],
		[w.signedAt, `${siteTime(c.at, timeZone)} · ${c.at}`],
		[w.keyId, c.keyId],
		[w.signature, c.signature]
	];
	for (const [k, v] of rows) flow.row([{ text: k, bold: true, size: 8 }, { text: v, size: 8 }], [28, 72]);
}
