import { createHash, createPrivateKey, createPublicKey, sign, verify } from 'node:crypto';
import { z } from 'zod';
import { canonicalJson } from '$lib/domain/canonical';
import { keyIdOf } from '../audit/checkpoint';
import { BackupRefusedError } from './errors';

/**
 * The manifest of a backup: what it holds and the SHA-256 (FIPS 180-4) of every part, the
 * migrations the database was at, the ledger head and the latest signed checkpoint. Stored as
 * RFC 8785 canonical JSON in `manifest.json`; `manifest.sig` holds the Ed25519 signature
 * (RFC 8032) over exactly those bytes with the site's checkpoint key, so a changed manifest —
 * and through its hashes any changed part — is detected (21 CFR 11.10(c); Annex 11 §7.2).
 */
export const MANIFEST_TYPE = 'rimebook.backup.manifest';
export const MANIFEST_NAME = 'manifest.json';
export const SIGNATURE_NAME = 'manifest.sig';

const hex64 = z.string().regex(/^[0-9a-f]{64}$/);

const tablePart = z.object({
	kind: z.literal('table'),
	name: z.string().regex(/^db\/[a-z_][a-z0-9_]*\.jsonl\.gz$/),
	table: z.string().regex(/^[a-z_][a-z0-9_]*$/),
	columns: z.array(z.string().min(1)),
	/** Load order: tables that others reference come first (foreign keys). */
	order: z.number().int().min(0),
	rows: z.number().int().min(0),
	bytes: z.number().int().min(0),
	sha256: hex64
});

const blobPart = z.object({
	kind: z.literal('blob'),
	name: z.string().regex(/^blobs\/[0-9a-f]{64}$/),
	contentType: z.string(),
	bytes: z.number().int().min(0),
	sha256: hex64
});

export const manifestSchema = z.object({
	type: z.literal(MANIFEST_TYPE),
	version: z.literal(1),
	createdAt: z.string(),
	app: z.object({ name: z.literal('rimebook'), version: z.string() }),
	source: z.object({ kind: z.enum(['pglite', 'postgresql']), serverVersion: z.string() }),
	migrations: z.array(z.object({ tag: z.string().nullable(), hash: hex64, when: z.number().int() })),
	migrationHead: z.object({ tag: z.string().nullable(), hash: hex64, when: z.number().int() }).nullable(),
	sequences: z.array(z.object({ name: z.string(), lastValue: z.string().regex(/^-?[0-9]+$/), isCalled: z.boolean() })),
	ledger: z.object({
		head: z.object({ seq: z.number().int().min(0), hash: hex64 }),
		checkpoint: z
			.object({ size: z.number().int(), root: hex64, head: z.object({ seq: z.number().int(), hash: hex64 }), at: z.string(), keyId: z.string(), statement: z.string(), signature: z.string() })
			.nullable()
	}),
	counts: z.object({ tables: z.number().int(), rows: z.number().int(), blobs: z.number().int(), blobBytes: z.number().int() }),
	parts: z.array(z.discriminatedUnion('kind', [tablePart, blobPart]))
});

export type Manifest = z.infer<typeof manifestSchema>;
export type TablePart = z.infer<typeof tablePart>;
export type BlobPart = z.infer<typeof blobPart>;

export interface ManifestSignature {
	algorithm: 'Ed25519';
	keyId: string;
	/** SPKI PEM of the signing key, so the file can be checked on any machine. */
	publicKey: string;
	/** Base64 Ed25519 signature over the bytes of manifest.json. */
	signature: string;
}

export function sha256Hex(bytes: Uint8Array | string): string {
	return createHash('sha256').update(bytes).digest('hex');
}

/** The bytes of manifest.json: RFC 8785 text, so the same manifest always has the same bytes. */
export function manifestBytes(manifest: Manifest): Buffer {
	return Buffer.from(canonicalJson(manifest), 'utf8');
}

export function signManifest(bytes: Buffer, key: { id: string; publicKey: string; privateKey: string }): ManifestSignature {
	return {
		algorithm: 'Ed25519',
		keyId: key.id,
		publicKey: key.publicKey,
		signature: sign(null, bytes, createPrivateKey(key.privateKey)).toString('base64')
	};
}

const signatureSchema = z.object({ algorithm: z.literal('Ed25519'), keyId: z.string().min(1), publicKey: z.string().min(1), signature: z.string().min(1) });

/**
 * Checks manifest.sig against manifest.json and parses the manifest. The public key travels in the
 * file; it must hash to the key id named (keyIdOf: SHA-256 of the SPKI), and when the caller pins
 * the site's key id (trustedKeyIds), it must be one of them — otherwise anyone could re-sign a
 * changed manifest with a key of their own.
 */
export function openManifest(manifestRaw: Buffer, signatureRaw: Buffer, trustedKeyIds?: readonly string[]): { manifest: Manifest; signature: ManifestSignature } {
	let signature: ManifestSignature;
	try {
		signature = signatureSchema.parse(JSON.parse(signatureRaw.toString('utf8')));
	} catch {
		throw new BackupRefusedError(SIGNATURE_NAME, 'damaged', `${SIGNATURE_NAME} is not a readable Ed25519 signature record.`);
	}
	let keyId: string;
	try {
		keyId = keyIdOf(signature.publicKey);
	} catch {
		throw new BackupRefusedError(SIGNATURE_NAME, 'damaged', `${SIGNATURE_NAME} holds a public key that cannot be read.`);
	}
	if (keyId !== signature.keyId) throw new BackupRefusedError(SIGNATURE_NAME, 'signature', `${SIGNATURE_NAME} names key ${signature.keyId}, but its public key is key ${keyId}.`);
	if (trustedKeyIds && !trustedKeyIds.includes(keyId)) {
		throw new BackupRefusedError(SIGNATURE_NAME, 'untrusted-key', `The manifest is signed with key ${keyId}, which is not a key this site trusts (${trustedKeyIds.join(', ') || 'none'}).`);
	}
	let good = false;
	try {
		good = verify(null, manifestRaw, createPublicKey(signature.publicKey), Buffer.from(signature.signature, 'base64'));
	} catch {
		good = false;
	}
	if (!good) throw new BackupRefusedError(MANIFEST_NAME, 'signature', `The Ed25519 signature of ${MANIFEST_NAME} does not verify under key ${keyId}: the manifest was changed after it was signed.`);
	let manifest: Manifest;
	try {
		manifest = manifestSchema.parse(JSON.parse(manifestRaw.toString('utf8')));
	} catch (cause) {
		throw new BackupRefusedError(MANIFEST_NAME, 'manifest', `${MANIFEST_NAME} is signed but not a manifest this release reads (${cause instanceof Error ? cause.message.slice(0, 200) : 'unreadable'}).`);
	}
	return { manifest, signature };
}
