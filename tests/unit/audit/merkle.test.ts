import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { extendFrontier, frontierRoot, fromHex, leafHash, MerkleTree, nodeHash, toHex, verifyConsistency, verifyInclusion, type Digest } from '$lib/domain/merkle';

const sha256: Digest = (d) => createHash('sha256').update(d).digest();

// The Certificate Transparency test vectors (RFC 6962 reference implementation, merkle_tree_test.cc;
// also used by RFC 9162 implementations), as listed in shared/references/part11.md.
const ctLeaves = ['', '00', '10', '2021', '3031', '40414243', '5051525354555657', '606162636465666768696a6b6c6d6e6f'].map(fromHex);

function treeOf(leaves: Uint8Array[]): MerkleTree {
	const t = new MerkleTree(sha256);
	for (const l of leaves) t.append(l);
	return t;
}

// The RFC 9162 2.1 definitions taken literally (slices and recursion), to check the fast tree against.
function naiveRoot(leaves: Uint8Array[]): Uint8Array {
	if (leaves.length === 0) return sha256(new Uint8Array(0));
	if (leaves.length === 1) return leafHash(sha256, leaves[0]);
	let k = 1;
	while (k * 2 < leaves.length) k *= 2;
	return nodeHash(sha256, naiveRoot(leaves.slice(0, k)), naiveRoot(leaves.slice(k)));
}
function naivePath(m: number, leaves: Uint8Array[]): Uint8Array[] {
	if (leaves.length <= 1) return [];
	let k = 1;
	while (k * 2 < leaves.length) k *= 2;
	return m < k ? [...naivePath(m, leaves.slice(0, k)), naiveRoot(leaves.slice(k))] : [...naivePath(m - k, leaves.slice(k)), naiveRoot(leaves.slice(0, k))];
}
function naiveSubproof(m: number, leaves: Uint8Array[], b: boolean): Uint8Array[] {
	if (m === leaves.length) return b ? [] : [naiveRoot(leaves)];
	let k = 1;
	while (k * 2 < leaves.length) k *= 2;
	return m <= k ? [...naiveSubproof(m, leaves.slice(0, k), b), naiveRoot(leaves.slice(k))] : [...naiveSubproof(m - k, leaves.slice(k), false), naiveRoot(leaves.slice(0, k))];
}

describe('Merkle tree hashing (RFC 9162 2.1.1; RFC 6962 2.1)', () => {
	it('gives the published CT roots for 0, 1 and 8 leaves (part11.md, "Tamper evidence")', () => {
		const t = treeOf(ctLeaves);
		expect(toHex(t.root(0))).toBe('e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855'); // SHA-256("")
		expect(toHex(t.root(1))).toBe('6e340b9cffb37a989ca544e6bb780a2c78901d3fb33738768511a30617afa01d');
		expect(toHex(t.root(8))).toBe('5dc9da79a70659a9ad559cb701ded9a2ab9d823aad2f4960cfe370eff4604328');
	});

	it('gives the CT reference roots for every size 2..7 (merkle_tree_test.cc, from memory of the vector table)', () => {
		// From memory of the CT reference test vectors (kSHA256Roots); the sizes 1 and 8 above come from part11.md.
		const expected = [
			'fac54203e7cc696cf0dfcb42c92a1d9dbaf70ad9e621f4bd8d98662f00e3c125',
			'aeb6bcfe274b70a14fb067a5e5578264db0fa9b51af5e0ba159158f329e06e77',
			'd37ee418976dd95753c1c73862b9398fa2a2cf9b4ff0fdfe8b30cd95209614b7',
			'4e3bbb1f7b478dcfe71fb631631519a3bca12c9aefca1612bfce4c13a86264d4',
			'76e67dadbcdf1e10e1b74ddc608abd2f98dfb16fbce75277b5232a127f2087ef',
			'ddb89be403809e325750d3d263cd78929c2942b7942a34b77e122c9594a74c8c'
		];
		const t = treeOf(ctLeaves);
		expected.forEach((root, i) => expect(toHex(t.root(i + 2))).toBe(root));
	});

	it('matches the literal RFC definitions for every size 0..70 (roots, every inclusion path, every consistency proof)', () => {
		const leaves = Array.from({ length: 70 }, (_, i) => Uint8Array.of(i, i >> 8, 0xab));
		const t = treeOf(leaves);
		for (let n = 0; n <= leaves.length; n++) {
			const root = t.root(n);
			expect(toHex(root)).toBe(toHex(naiveRoot(leaves.slice(0, n))));
			for (let m = 0; m < n; m++) {
				const path = t.inclusionProof(m, n);
				expect(path.map(toHex)).toEqual(naivePath(m, leaves.slice(0, n)).map(toHex));
				expect(verifyInclusion(sha256, m, n, leafHash(sha256, leaves[m]), path, root)).toBe(true);
			}
			for (let m = 1; m < n; m++) {
				const proof = t.consistencyProof(m, n);
				expect(proof.map(toHex)).toEqual(naiveSubproof(m, leaves.slice(0, n), true).map(toHex));
				expect(verifyConsistency(sha256, m, n, t.root(m), root, proof)).toBe(true);
			}
		}
	}, 60_000); // exhaustive up to 70 leaves: no speed claim, only room for the shared 2-core machine

	it('rejects an inclusion proof for the wrong leaf, index, root, a shortened path or a changed sibling', () => {
		const leaves = Array.from({ length: 13 }, (_, i) => Uint8Array.of(i));
		const t = treeOf(leaves);
		const root = t.root();
		for (let m = 0; m < 13; m++) {
			const path = t.inclusionProof(m);
			const leaf = leafHash(sha256, leaves[m]);
			expect(verifyInclusion(sha256, m, 13, leafHash(sha256, Uint8Array.of(99)), path, root)).toBe(false);
			expect(verifyInclusion(sha256, (m + 1) % 13, 13, leaf, path, root)).toBe(false);
			expect(verifyInclusion(sha256, m, 13, leaf, path, t.root(12))).toBe(false);
			expect(verifyInclusion(sha256, m, 13, leaf, path.slice(0, -1), root)).toBe(false);
			const bent = path.map((p, i) => (i === 0 ? Uint8Array.from(p, (b, j) => (j === 0 ? b ^ 1 : b)) : p));
			expect(verifyInclusion(sha256, m, 13, leaf, bent, root)).toBe(false);
		}
		expect(verifyInclusion(sha256, 13, 13, leafHash(sha256, leaves[0]), [], root)).toBe(false);
	});

	it('rejects a consistency proof against a tree that does not extend the first', () => {
		const leaves = Array.from({ length: 21 }, (_, i) => Uint8Array.of(i));
		const t = treeOf(leaves);
		const forged = treeOf([...leaves.slice(0, 5), Uint8Array.of(250), ...leaves.slice(6)]);
		for (let m = 1; m < 21; m++) {
			const proof = t.consistencyProof(m, 21);
			expect(verifyConsistency(sha256, m, 21, t.root(m), forged.root(21), proof)).toBe(false);
			expect(verifyConsistency(sha256, m, 21, forged.root(m), t.root(21), proof)).toBe(m <= 5);
		}
		expect(verifyConsistency(sha256, 7, 7, t.root(7), t.root(7), [])).toBe(true);
		expect(verifyConsistency(sha256, 7, 7, t.root(7), t.root(8), [])).toBe(false);
		expect(verifyConsistency(sha256, 0, 7, t.root(0), t.root(7), [])).toBe(true);
		expect(verifyConsistency(sha256, 8, 7, t.root(8), t.root(7), [])).toBe(false);
	});

	it('extends a compact range (frontier) to the same root as the full tree, for every size 0..100', () => {
		const leaves = Array.from({ length: 100 }, (_, i) => leafHash(sha256, Uint8Array.of(i, 7)));
		const t = new MerkleTree(sha256);
		let f = { size: 0, peaks: [] as Uint8Array[] };
		for (let n = 0; n <= 100; n++) {
			expect(toHex(frontierRoot(sha256, f.peaks))).toBe(toHex(t.root()));
			expect(f.peaks).toHaveLength(n.toString(2).replace(/0/g, '').length);
			if (n < 100) {
				// Extend in uneven steps to exercise carries across calls.
				f = extendFrontier(sha256, f, [leaves[n]]);
				t.appendLeafHash(leaves[n]);
			}
		}
		const batch = extendFrontier(sha256, extendFrontier(sha256, { size: 0, peaks: [] }, leaves.slice(0, 37)), leaves.slice(37));
		expect(toHex(frontierRoot(sha256, batch.peaks))).toBe(toHex(t.root()));
	});
});
