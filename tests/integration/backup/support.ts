import { generateKeyPairSync } from 'node:crypto';
import { writeFileSync } from 'node:fs';
import { gunzipSync, gzipSync } from 'node:zlib';
import { desc } from 'drizzle-orm';
import type { Database, Executor } from '$lib/server/db/client';
import { auditSigningKey } from '$lib/server/db/schema';
import { queryRows } from '$lib/server/audit/rows';
import { keyIdOf } from '$lib/server/audit/checkpoint';
import { listTables, quoteIdent } from '$lib/server/backup/catalog';
import { applyPortableSettings } from '$lib/server/backup/rows';
import { manifestBytes, sha256Hex, signManifest, type Manifest } from '$lib/server/backup/manifest';
import { END_OF_ARCHIVE, indexTar, padding, readEntry, tarHeader } from '$lib/server/backup/tar';

/** Every entry of a backup file, in order, as bytes. */
export async function readArchive(file: string): Promise<{ name: string; bytes: Buffer }[]> {
	const entries = await indexTar(file);
	return Promise.all(entries.map(async (e) => ({ name: e.name, bytes: await readEntry(file, e) })));
}

/** Writes entries as a ustar archive (the same layout the backup writer uses). */
export function writeArchive(file: string, entries: { name: string; bytes: Buffer }[]): void {
	const chunks: Buffer[] = [];
	for (const e of entries) chunks.push(tarHeader(e.name, e.bytes.length, new Date()), e.bytes, padding(e.bytes.length));
	chunks.push(END_OF_ARCHIVE);
	writeFileSync(file, Buffer.concat(chunks));
}

export function manifestOf(entries: { name: string; bytes: Buffer }[]): Manifest {
	return JSON.parse(entries.find((e) => e.name === 'manifest.json')!.bytes.toString('utf8')) as Manifest;
}

/** Replaces a part, fixes its size and SHA-256 in the manifest and signs the manifest again with `key` (an insider with the key). */
export function replacePart(entries: { name: string; bytes: Buffer }[], name: string, bytes: Buffer, key: { id: string; publicKey: string; privateKey: string }) {
	const manifest = manifestOf(entries);
	const part = manifest.parts.find((p) => p.name === name)!;
	part.bytes = bytes.length;
	part.sha256 = sha256Hex(bytes);
	const raw = manifestBytes(manifest);
	return entries.map((e) =>
		e.name === name ? { name, bytes } : e.name === 'manifest.json' ? { name: e.name, bytes: raw } : e.name === 'manifest.sig' ? { name: e.name, bytes: Buffer.from(JSON.stringify(signManifest(raw, key))) } : e
	);
}

export async function siteKeyOf(db: Database) {
	const [k] = await db.select().from(auditSigningKey).orderBy(desc(auditSigningKey.createdAt)).limit(1);
	return { id: keyIdOf(k.publicKey), publicKey: k.publicKey, privateKey: k.privateKey };
}

/** A fresh Ed25519 key that no site holds (RFC 8032 key generation by node:crypto). */
export function strangerKey() {
	const { publicKey, privateKey } = generateKeyPairSync('ed25519');
	const pem = publicKey.export({ type: 'spki', format: 'pem' }).toString();
	return { id: keyIdOf(pem), publicKey: pem, privateKey: privateKey.export({ type: 'pkcs8', format: 'pem' }).toString() };
}

export function gunzipLines(bytes: Buffer): string[] {
	return gunzipSync(bytes).toString('utf8').split('\n').filter((l) => l !== '');
}

export function gzipLines(lines: string[]): Buffer {
	return gzipSync(Buffer.from(lines.join('\n') + '\n', 'utf8'));
}

/**
 * Every table's rows as PostgreSQL's own text form (row::text, generated columns included), in key
 * order, read independently of the backup code's dump path.
 */
export async function tableTexts(db: Database, options: { maxAuditSeq?: number } = {}): Promise<Map<string, string[]>> {
	return db.transaction(async (tx) => {
		await applyPortableSettings(tx);
		const out = new Map<string, string[]>();
		for (const t of await listTables(tx)) {
			const where = t.name === 'audit_event' && options.maxAuditSeq !== undefined ? ` where seq <= ${Number(options.maxAuditSeq)}` : '';
			const rows = await queryRows<[string]>(tx, `select r::text from ${quoteIdent(t.name)} as r${where} order by ${t.orderBy.map(quoteIdent).join(', ')}`, []);
			out.set(t.name, rows.map((r) => r[0]));
		}
		return out;
	});
}

export async function relationCount(db: Executor): Promise<number> {
	const [[n]] = await queryRows<[number | string]>(db, "select count(*) from pg_catalog.pg_class c join pg_catalog.pg_namespace n on n.oid = c.relnamespace where n.nspname not in ('pg_catalog', 'information_schema') and n.nspname not like 'pg\\_toast%'", []);
	return Number(n);
}

