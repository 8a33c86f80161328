import { createHash, createPrivateKey, createPublicKey, generateKeyPairSync, sign, verify } from 'node:crypto';
import { asc, desc, eq, sql } from 'drizzle-orm';
import { canonicalJson } from '$lib/domain/canonical';
import { extendFrontier, frontierRoot, fromHex, leafHash, toHex, type Digest } from '$lib/domain/merkle';
import type { Database, Executor } from '../db/client';
import { auditCheckpoint, auditSigningKey, type AuditCheckpoint } from '../db/schema';
import { runUnitOfWork } from '../work';
import { LEDGER_LOCK_KEY, rowsOf, systemActor } from './ledger';
import { queryRows } from './rows';

/**
 * Signed checkpoints (tree heads) of the ledger: the Merkle root (RFC 9162 2.1) over the hashes
 * of events 1..size plus the chain head, signed with the site's Ed25519 key (RFC 8032) — the
 * "checkpoints beyond a chain" of design.md. A checkpoint handed to an inspector proves later that
 * no event up to `size` changed, and an inclusion proof shows one event is among them.
 */
export const sha256: Digest = (data) => createHash('sha256').update(data).digest();

export const TREE_HEAD_TYPE = 'rimebook.audit.tree-head';

export interface SignedCheckpoint {
	size: number;
	root: string;
	head: { seq: number; hash: string };
	at: string;
	keyId: string;
	/** The exact RFC 8785 text that was signed. */
	statement: string;
	/** Ed25519 signature over the UTF-8 of `statement`, base64. */
	signature: string;
}

export interface SiteKey {
	id: string;
	/** SPKI, PEM. */
	publicKey: string;
}

/** The signed statement of a tree head, as RFC 8785 text. */
export function treeHeadStatement(head: { size: number; root: string; headHash: string; at: string; keyId: string }): string {
	return canonicalJson({
		type: TREE_HEAD_TYPE,
		version: 1,
		size: head.size,
		root: head.root,
		head: { seq: head.size, hash: head.headHash },
		at: head.at,
		keyId: head.keyId
	});
}

/** Key id: the first 32 hex digits of SHA-256 over the SPKI DER of the public key. */
export function keyIdOf(publicKeyPem: string): string {
	const der = createPublicKey(publicKeyPem).export({ type: 'spki', format: 'der' });
	return createHash('sha256').update(der).digest('hex').slice(0, 32);
}

async function latestKeyRow(db: Executor) {
	const [row] = await db.select().from(auditSigningKey).orderBy(desc(auditSigningKey.createdAt)).limit(1);
	return row;
}

/**
 * Makes sure the site has a signing key, creating one if not (finding 16). Creating a key is a
 * change to what vouches for the ledger, so it is a unit of work with its own audit event
 * (21 CFR 11.10(e)), never a side effect of a read. Call it once at start-up (hooks init);
 * createCheckpoint calls it too, so the first checkpoint also works on a fresh database. Returns
 * the public half only. Production sites should manage this key themselves (a key manager or HSM,
 * with the private key never stored beside the data it vouches for); see the README.
 */
export async function ensureSigningKey(db: Database): Promise<SiteKey & { created: boolean }> {
	const existing = await latestKeyRow(db);
	if (existing) return { id: existing.id, publicKey: existing.publicKey, created: false };
	return runUnitOfWork(db, systemActor, async (uow) => {
		// Two nodes starting together must not make two keys: the ledger lock serialises them
		// (re-entrant, so the append below takes it again in the same transaction).
		await uow.tx.execute(sql`select pg_advisory_xact_lock(${LEDGER_LOCK_KEY})`);
		const again = await latestKeyRow(uow.tx);
		if (again) {
			// Someone else made it meanwhile; a unit of work must still say what it did.
			await uow.audit({ action: 'audit.signing-key.confirm', entityType: 'audit-signing-key', entityId: again.id, after: { keyId: again.id } });
			return { id: again.id, publicKey: again.publicKey, created: false };
		}
		const { publicKey, privateKey } = generateKeyPairSync('ed25519');
		const row = {
			publicKey: publicKey.export({ type: 'spki', format: 'pem' }).toString(),
			privateKey: privateKey.export({ type: 'pkcs8', format: 'pem' }).toString()
		};
		const id = keyIdOf(row.publicKey);
		await uow.tx.insert(auditSigningKey).values({ id, ...row });
		// Never the private key in the ledger: only its id, algorithm and public half.
		await uow.audit({ action: 'audit.signing-key.create', entityType: 'audit-signing-key', entityId: id, after: { keyId: id, algorithm: 'Ed25519', publicKey: row.publicKey } });
		return { id, publicKey: row.publicKey, created: true };
	});
}

/** The site's current public key for pages and the API; never the private key, never creates one. */
export async function getPublicSiteKey(db: Executor): Promise<SiteKey | null> {
	const row = await latestKeyRow(db);
	return row ? { id: row.id, publicKey: row.publicKey } : null;
}

/** Only the checkpoint signer reads the private key. */
async function loadPrivateSigningKey(db: Database): Promise<{ id: string; privateKey: string }> {
	await ensureSigningKey(db);
	const row = await latestKeyRow(db);
	if (!row) throw new Error('The site signing key could not be created.');
	return { id: row.id, privateKey: row.privateKey };
}

export async function listSiteKeys(db: Executor): Promise<SiteKey[]> {
	return db.select({ id: auditSigningKey.id, publicKey: auditSigningKey.publicKey }).from(auditSigningKey).orderBy(asc(auditSigningKey.createdAt));
}

function toSigned(row: AuditCheckpoint): SignedCheckpoint {
	return { size: row.size, root: row.root, head: { seq: row.size, hash: row.headHash }, at: row.at, keyId: row.keyId, statement: row.statement, signature: row.signature };
}

export async function getLatestCheckpoint(db: Executor): Promise<SignedCheckpoint | null> {
	const [row] = await db.select().from(auditCheckpoint).orderBy(desc(auditCheckpoint.size)).limit(1);
	return row ? toSigned(row) : null;
}

export async function listCheckpoints(db: Executor, options: { limit?: number } = {}): Promise<SignedCheckpoint[]> {
	const rows = await db.select().from(auditCheckpoint).orderBy(desc(auditCheckpoint.size)).limit(options.limit ?? 1000);
	return rows.map(toSigned);
}

export async function getCheckpoint(db: Executor, size: number): Promise<SignedCheckpoint | null> {
	const [row] = await db.select().from(auditCheckpoint).where(eq(auditCheckpoint.size, size));
	return row ? toSigned(row) : null;
}

/**
 * Signs a tree head over every event appended so far: call it at intervals and at every batch
 * release (design.md). Returns the latest checkpoint unchanged when no event was appended since,
 * and null while the ledger is empty. Holds the ledger lock while it reads the head, so the tree
 * head always names a committed, gap-free prefix; only the leaves since the previous checkpoint
 * are hashed (its compact range is stored with it).
 */
export async function createCheckpoint(db: Database): Promise<SignedCheckpoint | null> {
	const key = await loadPrivateSigningKey(db);
	return db.transaction(async (tx) => {
		await tx.execute(sql`select pg_advisory_xact_lock(${LEDGER_LOCK_KEY})`);
		const [previous] = await tx.select().from(auditCheckpoint).orderBy(desc(auditCheckpoint.size)).limit(1);
		const from = previous?.size ?? 0;
		const head = rowsOf<{ seq: string | number | null; at: string }>(
			await tx.execute(sql`select (select max(seq) from audit_event) as seq,
				to_char(clock_timestamp() at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"') as at`)
		)[0];
		const size = Number(head.seq ?? 0);
		if (size === from) return previous ? toSigned(previous) : null;
		let frontier = { size: from, peaks: (previous?.frontier ?? []).map(fromHex) };
		let lastHash = previous?.headHash ?? '';
		for (let after = from; after < size; ) {
			const rows = await queryRows<[number | string, string]>(tx, 'select seq, hash from audit_event where seq > $1 and seq <= $2 order by seq limit 20000', [after, size]);
			if (rows.length === 0) break;
			frontier = extendFrontier(sha256, frontier, rows.map((r) => leafHash(sha256, fromHex(r[1]))));
			after = Number(rows[rows.length - 1][0]);
			lastHash = rows[rows.length - 1][1];
		}
		if (frontier.size !== size) throw new Error(`The ledger has a gap below seq ${size}; no checkpoint was signed. Run the verification.`);
		const root = toHex(frontierRoot(sha256, frontier.peaks));
		const statement = treeHeadStatement({ size, root, headHash: lastHash, at: head.at, keyId: key.id });
		const signature = sign(null, Buffer.from(statement, 'utf8'), createPrivateKey(key.privateKey)).toString('base64');
		const row = { size, root, headHash: lastHash, at: head.at, statement, signature, keyId: key.id, frontier: frontier.peaks.map(toHex) };
		await tx.insert(auditCheckpoint).values(row);
		return toSigned({ ...row });
	});
}

/** Whether a checkpoint's signature is good under the given key and its fields match what was signed. */
export function checkCheckpointSignature(checkpoint: SignedCheckpoint, publicKeyPem: string): boolean {
	try {
		const stated = JSON.parse(checkpoint.statement) as { type?: string; size?: number; root?: string; head?: { seq?: number; hash?: string }; keyId?: string };
		const consistent =
			stated.type === TREE_HEAD_TYPE &&
			stated.size === checkpoint.size &&
			stated.root === checkpoint.root &&
			stated.head?.seq === checkpoint.size &&
			stated.head?.hash === checkpoint.head.hash &&
			stated.keyId === checkpoint.keyId &&
			keyIdOf(publicKeyPem) === checkpoint.keyId;
		return consistent && verify(null, Buffer.from(checkpoint.statement, 'utf8'), createPublicKey(publicKeyPem), Buffer.from(checkpoint.signature, 'base64'));
	} catch {
		return false;
	}
}
