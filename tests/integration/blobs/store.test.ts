import { createHash } from 'node:crypto';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
// @ts-expect-error s3rver ships no type declarations
import S3rver from 's3rver';
import { localBlobStore, type BlobStore } from '$lib/server/blobs/store';
import { s3BlobStore } from '$lib/server/blobs/s3';

const sha = (bytes: Uint8Array) => createHash('sha256').update(bytes).digest('hex');

// A local S3-compatible fake (s3rver) on loopback stands in for the bucket (toolchain.md).
let fake: { run(): Promise<{ port: number }>; close(): Promise<void> };
let s3Dir: string;
let localDir: string;
const stores: Record<string, BlobStore> = {};

beforeAll(async () => {
	s3Dir = mkdtempSync(join(tmpdir(), 'rimebook-s3-'));
	localDir = mkdtempSync(join(tmpdir(), 'rimebook-blobs-'));
	fake = new S3rver({ port: 0, address: '127.0.0.1', silent: true, directory: s3Dir, configureBuckets: [{ name: 'rimebook-test' }] });
	const { port } = await fake.run();
	stores.local = localBlobStore(localDir);
	stores.s3 = s3BlobStore({ bucket: 'rimebook-test', endpoint: `http://127.0.0.1:${port}`, region: 'us-east-1', accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' });
});

afterAll(async () => {
	await fake?.close();
	rmSync(s3Dir, { recursive: true, force: true });
	rmSync(localDir, { recursive: true, force: true });
});

describe.each(['local', 's3'])('the %s blob store (attachments stored by SHA-256)', (kind) => {
	it('gives back exactly the bytes it was given, under their SHA-256', async () => {
		// FIPS 180-4 example: SHA-256("abc") = ba7816bf…15ad.
		const abc = new TextEncoder().encode('abc');
		expect(sha(abc)).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
		await stores[kind].put(sha(abc), abc, 'text/plain');
		expect(Buffer.from((await stores[kind].get(sha(abc)))!).toString()).toBe('abc');
		const bytes = new Uint8Array(256 * 1024).map((_, i) => (i * 31) % 251);
		await stores[kind].put(sha(bytes), bytes, 'application/octet-stream');
		expect(sha((await stores[kind].get(sha(bytes)))!)).toBe(sha(bytes));
	});

	it('stores the same content once (putting it again changes nothing)', async () => {
		const bytes = new TextEncoder().encode('same content twice');
		await stores[kind].put(sha(bytes), bytes, 'text/plain');
		await stores[kind].put(sha(bytes), bytes, 'text/plain');
		expect(Buffer.from((await stores[kind].get(sha(bytes)))!).toString()).toBe('same content twice');
	});

	it('answers null for content it does not hold', async () => {
		expect(await stores[kind].get('0'.repeat(64))).toBeNull();
	});
});

describe.each(['local', 's3'])('the %s blob store refuses names that are not SHA-256 hex (path traversal)', (kind) => {
	it.each(['../../etc/passwd', 'ab/cd', 'A'.repeat(64), ''])('refuses %j', async (name) => {
		await expect(stores[kind].put(name, new Uint8Array([1]), 'text/plain')).rejects.toThrow(/SHA-256/);
		await expect(stores[kind].get(name)).rejects.toThrow(/SHA-256/);
	});
});
