import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { createHash } from 'node:crypto';
import { sha256, sha256Hex, toHex } from '$lib/domain/sha256';

describe('SHA-256 (FIPS 180-4)', () => {
	// NIST CSRC "Examples with intermediate values", SHA-256 (FIPS 180-4 example vectors)
	it('one-block message "abc"', () => {
		expect(sha256Hex('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
	});

	it('the empty message', () => {
		expect(sha256Hex('')).toBe('e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855');
	});

	it('the 448-bit two-block message', () => {
		expect(sha256Hex('abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq')).toBe(
			'248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1'
		);
	});

	it('the 896-bit message', () => {
		expect(
			sha256Hex('abcdefghbcdefghicdefghijdefghijkefghijklfghijklmghijklmnhijklmnoijklmnopjklmnopqklmnopqrlmnopqrsmnopqrstnopqrstu')
		).toBe('cf5b16a778af8380036ce59e7b0492370b249b11e8f07a51afac45037afee9d1');
	});

	it('one million times "a"', () => {
		expect(sha256Hex('a'.repeat(1_000_000))).toBe('cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0');
	});

	it('agrees with node:crypto at every length around the block and padding boundaries', () => {
		for (let n = 0; n <= 130; n++) {
			const bytes = Uint8Array.from({ length: n }, (_, i) => (i * 31 + n) & 0xff);
			expect(toHex(sha256(bytes)), `length ${n}`).toBe(createHash('sha256').update(bytes).digest('hex'));
		}
	});

	it('agrees with node:crypto on random UTF-8 text', () => {
		fc.assert(
			fc.property(fc.string({ unit: 'grapheme', maxLength: 300 }), (s) => {
				expect(sha256Hex(s)).toBe(createHash('sha256').update(s, 'utf8').digest('hex'));
			})
		);
	});
});
