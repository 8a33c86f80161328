import { fromHex, MerkleTree, toHex } from '$lib/domain/merkle';
import type { Executor } from '../db/client';
import { getCheckpoint, getLatestCheckpoint, sha256, type SignedCheckpoint } from './checkpoint';
import { queryRows } from './rows';

/**
 * Inclusion and consistency proofs (RFC 9162 2.1.3, 2.1.4) against signed checkpoints. The tree
 * over event hashes is kept per database in this process and extended with new events only; it
 * holds no user state (style.md, "State management").
 */
const trees = new WeakMap<object, MerkleTree>();

export async function treeUpTo(db: Executor, size: number): Promise<MerkleTree> {
	let tree = trees.get(db);
	if (!tree) {
		tree = new MerkleTree(sha256);
		trees.set(db, tree);
	}
	while (tree.size < size) {
		const rows = await queryRows<[number | string, string]>(db, 'select seq, hash from audit_event where seq > $1 and seq <= $2 order by seq limit 50000', [tree.size, size]);
		if (rows.length === 0 || Number(rows[0][0]) !== tree.size + 1) throw new Error(`The ledger has a gap after seq ${tree.size}; run the verification.`);
		for (const [, hash] of rows) tree.append(fromHex(hash));
	}
	return tree;
}

export class ProofError extends Error {
	constructor(
		message: string,
		readonly status: 404 | 409
	) {
		super(message);
	}
}

export interface InclusionProof {
	seq: number;
	/** Leaf index in the tree: seq - 1. */
	index: number;
	hash: string;
	leafHash: string;
	path: string[];
	checkpoint: SignedCheckpoint;
}

/** Proof that event `seq` is in the latest checkpoint (or the one of size `size`). */
export async function getInclusionProof(db: Executor, seq: number, size?: number): Promise<InclusionProof> {
	const checkpoint = size === undefined ? await getLatestCheckpoint(db) : await getCheckpoint(db, size);
	if (!checkpoint) throw new ProofError('No signed checkpoint exists yet.', 404);
	if (seq < 1 || seq > checkpoint.size) throw new ProofError(`Event ${seq} is not covered by the checkpoint of size ${checkpoint.size}.`, 409);
	const tree = await treeUpTo(db, checkpoint.size);
	if (toHex(tree.root(checkpoint.size)) !== checkpoint.root) throw new ProofError('The stored events no longer give the signed root; run the verification.', 409);
	const [[hash]] = await queryRows<[string]>(db, 'select hash from audit_event where seq = $1', [seq]);
	return {
		seq,
		index: seq - 1,
		hash,
		leafHash: toHex(sha256(new Uint8Array([0, ...fromHex(hash)]))),
		path: tree.inclusionProof(seq - 1, checkpoint.size).map(toHex),
		checkpoint
	};
}

/** Proof that the checkpoint of size `to` extends the one of size `from`. */
export async function getConsistencyProof(db: Executor, from: number, to: number) {
	const [first, second] = await Promise.all([getCheckpoint(db, from), getCheckpoint(db, to)]);
	if (!first || !second) throw new ProofError('Both sizes must be signed checkpoints.', 404);
	if (from > to) throw new ProofError('The first checkpoint must not be larger than the second.', 409);
	const tree = await treeUpTo(db, to);
	return { from: first, to: second, path: tree.consistencyProof(from, to).map(toHex) };
}
