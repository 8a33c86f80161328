import { hashEvent, GENESIS_HASH } from './ledger';

/**
 * The rules that name the first break of the hash chain, given the rows in seq order. Shared by
 * both verification engines (app and database) so they report the same seq and kind.
 *
 * Terms: a row at position s is *intact* when SHA-256(prev_hash ‖ canonical) equals its hash, and
 * *in place* when its payload's seq (the last member of the canonical text) equals s. The chain is
 * good up to s-1; `lastHash` is the hash of row s-1 (GENESIS_HASH before row 1). The first row
 * that is not intact, not in place, or whose prev_hash is not `lastHash`, is the anomaly; the row
 * after it (if any) decides between the kinds:
 *
 * - missing at s: no row has seq s (a gap), or the row at s carries a later event p > s and the
 *   next row carries p+1 (or there is none): events s..p-1 were deleted and the rest renumbered;
 *   also when a signed checkpoint covers more events than the table holds (tail deleted).
 * - reordered at s: the row at s carries a later event p > s but the next row does not carry p+1:
 *   rows were swapped or moved.
 * - inserted at s: the row at s' > s carries the event p = s < s' (an earlier event shifted up by
 *   the rows inserted from s on); or the row at s is not intact and the next row carries event s
 *   and links to row s-1 (a forged row pushed the rest up by one).
 * - changed at s: the row at s is in place but not intact (its payload, prev_hash or hash was
 *   altered); or the row at s+1 is intact and in place but links to something other than row s
 *   (row s was altered and re-hashed); or a signed checkpoint of size s names another head hash
 *   than row s has (the prefix up to s was rewritten and re-hashed), or its signature fails.
 */
export type BreakKind = 'changed' | 'missing' | 'inserted' | 'reordered';

/** Which check failed, for the report and the inspector. */
export type BreakReason =
	| 'seq-gap'
	| 'renumbered'
	| 'moved'
	| 'shifted'
	| 'forged-row'
	| 'hash'
	| 'link'
	| 'columns'
	| 'checkpoint-size'
	| 'checkpoint-head'
	| 'checkpoint-signature'
	| 'checkpoint-root';

export interface ChainBreak {
	seq: number;
	kind: BreakKind;
	reason: BreakReason;
}

export interface ChainRow {
	seq: number;
	prevHash: string;
	hash: string;
	canonical: string;
}

/** The event seq stored in the payload: RFC 8785 sorts "seq" last, so the text ends `,"seq":N}`. */
export function payloadSeq(canonical: string): number {
	const at = canonical.lastIndexOf(',"seq":');
	if (at < 0 || !canonical.endsWith('}')) return NaN;
	const digits = canonical.slice(at + 7, -1);
	return /^[1-9][0-9]*$/.test(digits) ? Number(digits) : NaN;
}

export class ChainScanner {
	/** Rows verified good so far. */
	count = 0;
	lastHash: string;
	private expected: number;
	private pending: ChainRow | null = null;
	private found: ChainBreak | null = null;

	constructor(start: { seq: number; hash: string } = { seq: 0, hash: GENESIS_HASH }) {
		this.expected = start.seq + 1;
		this.lastHash = start.hash;
	}

	get firstBreak(): ChainBreak | null {
		return this.found;
	}

	/** The last good row's seq. */
	get headSeq(): number {
		return this.expected - 1;
	}

	/** Feeds the next row in seq order; returns false once a break is known (stop feeding). */
	feed(row: ChainRow): boolean {
		if (this.found) return false;
		if (this.pending) {
			this.found = this.classify(this.pending, row);
			return false;
		}
		const s = this.expected;
		if (row.seq !== s) {
			this.found = row.seq > s ? { seq: s, kind: 'missing', reason: 'seq-gap' } : { seq: row.seq, kind: 'inserted', reason: 'shifted' };
			return false;
		}
		if (row.prevHash === this.lastHash && payloadSeq(row.canonical) === s && hashEvent(row.prevHash, row.canonical) === row.hash) {
			this.lastHash = row.hash;
			this.expected += 1;
			this.count += 1;
			return true;
		}
		this.pending = row;
		return true;
	}

	/** No more rows: settles a pending anomaly. */
	finish(): ChainBreak | null {
		if (!this.found && this.pending) this.found = this.classify(this.pending, null);
		return this.found;
	}

	private classify(row: ChainRow, next: ChainRow | null): ChainBreak {
		const s = row.seq;
		const p = payloadSeq(row.canonical);
		if (p > s) {
			return next === null || payloadSeq(next.canonical) === p + 1
				? { seq: s, kind: 'missing', reason: 'renumbered' }
				: { seq: s, kind: 'reordered', reason: 'moved' };
		}
		if (p < s) return { seq: p, kind: 'inserted', reason: 'shifted' };
		const intact = p === s && hashEvent(row.prevHash, row.canonical) === row.hash;
		if (!intact) {
			if (next && payloadSeq(next.canonical) === s && next.prevHash === this.lastHash) return { seq: s, kind: 'inserted', reason: 'forged-row' };
			return { seq: s, kind: 'changed', reason: 'hash' };
		}
		// Intact and in place but linked elsewhere: its predecessor was altered and re-hashed.
		return { seq: Math.max(1, s - 1), kind: 'changed', reason: 'link' };
	}
}
