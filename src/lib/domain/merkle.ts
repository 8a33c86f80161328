/**
 * Merkle tree hashing, inclusion proofs and consistency proofs exactly as RFC 9162 (Certificate
 * Transparency 2.0), section 2.1, defines them (same as RFC 6962, 2.1): leaf = SHA-256(0x00 ‖ d),
 * node = SHA-256(0x01 ‖ left ‖ right), and a tree of n leaves splits at the largest power of two
 * smaller than n. Pure and isomorphic: SHA-256 is passed in (node:crypto on the server, any
 * synchronous SHA-256 in a browser), so the offline verifier and the app share this code.
 */

/** A synchronous SHA-256: bytes in, 32 bytes out. */
export type Digest = (data: Uint8Array) => Uint8Array;

const LEAF = Uint8Array.of(0x00);
const NODE = Uint8Array.of(0x01);

export function leafHash(digest: Digest, data: Uint8Array): Uint8Array {
	return digest(concatBytes(LEAF, data));
}

export function nodeHash(digest: Digest, left: Uint8Array, right: Uint8Array): Uint8Array {
	return digest(concatBytes(NODE, left, right));
}

/** The largest power of two smaller than n (n ≥ 2): RFC 9162 2.1.1's k. */
export function splitPoint(n: number): number {
	let k = 1;
	while (k * 2 < n) k *= 2;
	return k;
}

/**
 * A tree over leaf hashes with every complete level kept, so the root of any prefix, any inclusion
 * path and any consistency proof costs O(log n) hashes once built (O(n) to build).
 */
export class MerkleTree {
	/** levels[0] are the leaf hashes; levels[h][i] is the root of leaves [i·2^h, (i+1)·2^h). */
	private readonly levels: Uint8Array[][] = [[]];

	constructor(private readonly digest: Digest) {}

	get size(): number {
		return this.levels[0].length;
	}

	/** Appends a leaf by its data d (for the ledger: the 32 bytes of an event hash). */
	append(data: Uint8Array): void {
		this.appendLeafHash(leafHash(this.digest, data));
	}

	appendLeafHash(hash: Uint8Array): void {
		this.levels[0].push(hash);
		// Completes every perfect subtree that this leaf closes.
		let h = 0;
		let i = this.levels[0].length - 1;
		while (i % 2 === 1) {
			const below = this.levels[h];
			if (!this.levels[h + 1]) this.levels[h + 1] = [];
			this.levels[h + 1].push(nodeHash(this.digest, below[i - 1], below[i]));
			h += 1;
			i = (i - 1) / 2;
		}
	}

	/** MTH(D[0:size]) (RFC 9162 2.1.1); the empty tree's root is SHA-256 of nothing. */
	root(size = this.size): Uint8Array {
		this.checkSize(size);
		return size === 0 ? this.digest(new Uint8Array(0)) : this.range(0, size);
	}

	/** PATH(index, D[0:size]) (RFC 9162 2.1.3.1), nearest sibling first. */
	inclusionProof(index: number, size = this.size): Uint8Array[] {
		this.checkSize(size);
		if (!Number.isInteger(index) || index < 0 || index >= size) throw new RangeError(`Leaf ${index} is not in a tree of ${size}.`);
		let lo = 0;
		let hi = size;
		const out: Uint8Array[] = [];
		// Walk down from the root, remembering the sibling of each step; the RFC lists them bottom-up.
		while (hi - lo > 1) {
			const k = splitPoint(hi - lo);
			if (index - lo < k) {
				out.push(this.range(lo + k, hi));
				hi = lo + k;
			} else {
				out.push(this.range(lo, lo + k));
				lo = lo + k;
			}
		}
		return out.reverse();
	}

	/** PROOF(m, D[0:n]) (RFC 9162 2.1.4.1). Empty when m is 0 or m equals n. */
	consistencyProof(m: number, n = this.size): Uint8Array[] {
		this.checkSize(n);
		if (!Number.isInteger(m) || m < 0 || m > n) throw new RangeError(`A tree of ${m} cannot precede a tree of ${n}.`);
		if (m === 0 || m === n) return [];
		return this.subproof(m, 0, n, true);
	}

	private subproof(m: number, lo: number, hi: number, complete: boolean): Uint8Array[] {
		const n = hi - lo;
		if (m === n) return complete ? [] : [this.range(lo, hi)];
		const k = splitPoint(n);
		if (m <= k) return [...this.subproof(m, lo, lo + k, complete), this.range(lo + k, hi)];
		return [...this.subproof(m - k, lo + k, hi, false), this.range(lo, lo + k)];
	}

	/** MTH of leaves [lo, hi) from the stored levels. */
	private range(lo: number, hi: number): Uint8Array {
		const n = hi - lo;
		if ((n & (n - 1)) === 0 && lo % n === 0) return this.levels[Math.log2(n)][lo / n];
		const k = splitPoint(n);
		return nodeHash(this.digest, this.range(lo, lo + k), this.range(lo + k, hi));
	}

	private checkSize(size: number) {
		if (!Number.isInteger(size) || size < 0 || size > this.size) throw new RangeError(`The tree has ${this.size} leaves, not ${size}.`);
	}
}

/** Verifies an inclusion proof (RFC 9162 2.1.3.2) of a leaf hash at `index` in a tree of `size`. */
export function verifyInclusion(digest: Digest, index: number, size: number, leaf: Uint8Array, proof: Uint8Array[], root: Uint8Array): boolean {
	if (!Number.isSafeInteger(index) || !Number.isSafeInteger(size) || index < 0 || index >= size) return false;
	// Plain numbers, not bitwise ops: sizes beyond 2^31 stay correct.
	let fn = index;
	let sn = size - 1;
	let r = leaf;
	for (const p of proof) {
		if (sn === 0) return false;
		if (fn % 2 === 1 || fn === sn) {
			r = nodeHash(digest, p, r);
			if (fn % 2 === 0) {
				while (fn % 2 === 0 && fn !== 0) {
					fn = Math.floor(fn / 2);
					sn = Math.floor(sn / 2);
				}
			}
		} else {
			r = nodeHash(digest, r, p);
		}
		fn = Math.floor(fn / 2);
		sn = Math.floor(sn / 2);
	}
	return sn === 0 && equalBytes(r, root);
}

/**
 * Verifies that a tree of `second` leaves extends a tree of `first` leaves (RFC 9162 2.1.4.2).
 * Two trees of the same size are consistent when their roots are equal; every tree extends the
 * empty tree.
 */
export function verifyConsistency(digest: Digest, first: number, second: number, firstRoot: Uint8Array, secondRoot: Uint8Array, proof: Uint8Array[]): boolean {
	if (!Number.isSafeInteger(first) || !Number.isSafeInteger(second) || first < 0 || first > second) return false;
	if (first === 0) return proof.length === 0;
	if (first === second) return proof.length === 0 && equalBytes(firstRoot, secondRoot);
	if (proof.length === 0) return false;
	// Step 2: for a power-of-two first tree the proof omits its root, which is a node of both trees.
	const path = isPowerOfTwo(first) ? [firstRoot, ...proof] : proof;
	let fn = first - 1;
	let sn = second - 1;
	while (fn % 2 === 1) {
		fn = Math.floor(fn / 2);
		sn = Math.floor(sn / 2);
	}
	let fr = path[0];
	let sr = path[0];
	for (const c of path.slice(1)) {
		if (sn === 0) return false;
		if (fn % 2 === 1 || fn === sn) {
			fr = nodeHash(digest, c, fr);
			sr = nodeHash(digest, c, sr);
			if (fn % 2 === 0) {
				while (fn % 2 === 0 && fn !== 0) {
					fn = Math.floor(fn / 2);
					sn = Math.floor(sn / 2);
				}
			}
		} else {
			sr = nodeHash(digest, sr, c);
		}
		fn = Math.floor(fn / 2);
		sn = Math.floor(sn / 2);
	}
	return sn === 0 && equalBytes(fr, firstRoot) && equalBytes(sr, secondRoot);
}

function isPowerOfTwo(n: number): boolean {
	while (n > 1 && n % 2 === 0) n /= 2;
	return n === 1;
}

/**
 * The compact range of a tree: the roots of its perfect subtrees, largest first (one per set bit
 * of the size). Lets a checkpoint extend the previous one by hashing only the new leaves.
 */
export function extendFrontier(digest: Digest, frontier: { size: number; peaks: Uint8Array[] }, leafHashes: Uint8Array[]): { size: number; peaks: Uint8Array[] } {
	const peaks = [...frontier.peaks];
	let size = frontier.size;
	for (const leaf of leafHashes) {
		let h = leaf;
		// Merge while the lowest subtree is complete: the number of merges is the count of trailing 1 bits of size.
		let s = size;
		while (s % 2 === 1) {
			h = nodeHash(digest, peaks.pop()!, h);
			s = Math.floor(s / 2);
		}
		peaks.push(h);
		size += 1;
	}
	return { size, peaks };
}

/** MTH from a compact range: the peaks folded right to left (RFC 9162 2.1.1's split, applied repeatedly). */
export function frontierRoot(digest: Digest, peaks: Uint8Array[]): Uint8Array {
	if (peaks.length === 0) return digest(new Uint8Array(0));
	let r = peaks[peaks.length - 1];
	for (let i = peaks.length - 2; i >= 0; i--) r = nodeHash(digest, peaks[i], r);
	return r;
}

export function concatBytes(...parts: Uint8Array[]): Uint8Array {
	const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
	let at = 0;
	for (const p of parts) {
		out.set(p, at);
		at += p.length;
	}
	return out;
}

export function equalBytes(a: Uint8Array, b: Uint8Array): boolean {
	if (a.length !== b.length) return false;
	let diff = 0;
	for (let i = 0; i < a.length; i++) diff |= a[i] ^ b[i];
	return diff === 0;
}

export function toHex(bytes: Uint8Array): string {
	let s = '';
	for (const b of bytes) s += b.toString(16).padStart(2, '0');
	return s;
}

export function fromHex(hex: string): Uint8Array {
	if (!/^(?:[0-9a-f]{2})*$/i.test(hex)) throw new TypeError('Not a hex string.');
	const out = new Uint8Array(hex.length / 2);
	for (let i = 0; i < out.length; i++) out[i] = parseInt(hex.slice(i * 2, i * 2 + 2), 16);
	return out;
}
