import { randomUUID } from 'node:crypto';
import { and, desc, eq, inArray, sql } from 'drizzle-orm';
import type { Database, Tx } from '../db/client';
import { pgErrorCode } from '../db/client';
import type { PgUpdateSetSource } from 'drizzle-orm/pg-core';
import { masterRecord, type MasterRecord } from '../db/schema';
import { runUnitOfWork, type UnitOfWork } from '../work';
import { actorOf } from '../auth/account';
import type { RelyingParty } from '../auth/passkey';
import type { SessionInfo, SessionUser } from '../auth/types';
import { signRecord, verifySigner, type SignatureCredentials } from '../signatures/ceremony';
import { hashTemplate, validateTemplate, type TemplateIssue } from '$lib/domain/template';
import { diffTemplates } from '$lib/domain/template-diff';
import { checkTransition, type MasterAction, type MasterStatus } from '$lib/domain/master-lifecycle';
import type { Template } from '$lib/schemas/template';
import { MasterError } from './errors';
import { assertPermission, permissionsOfUser } from './access';
import { authorsOf, findMaster, masterSignatureContent, templateOf } from './query';

/**
 * The master record services: create, import, edit a draft, and each lifecycle step (see
 * $lib/domain/master-lifecycle). Every write goes through runUnitOfWork with its audit event
 * (21 CFR 11.10(e)); signed steps run the signing ceremony first and write the signature in the
 * same unit of work (11.70). Each service checks the rules again inside its transaction, with the
 * row locked, so two people acting at once cannot both pass a check that only one may.
 */

export const MASTER_ENTITY = 'master-record';

/** Someone signing: the person, their browser session and their credentials (11.200). */
export interface SigningInput {
	user: SessionUser;
	session: SessionInfo | null;
	credentials: SignatureCredentials;
	address?: string;
	relyingParty?: RelyingParty;
}

const lifecyclePermissions = ['master.read', 'master.author', 'master.approve', 'master.return', 'batch.issue'] as const;

/** Refuses an action the rules do not allow, with the reason as its error code. */
export function assertTransition(user: SessionUser, row: Pick<MasterRecord, 'status' | 'createdBy' | 'authors' | 'submittedBy' | 'code' | 'version'>, action: MasterAction): void {
	const r = checkTransition(action, row.status, { permissions: permissionsOfUser(user, lifecyclePermissions), isAuthor: authorsOf(row).has(user.id) });
	if (r.ok) return;
	const name = `${row.code} v${row.version}`;
	if (r.reason === 'not-permitted') throw new MasterError('forbidden', 'Your roles do not allow this.');
	// 21 CFR 211.186(a): the master is checked and signed by a second, independent person.
	if (r.reason === 'own-version') throw new MasterError('own-version', `You wrote ${name}: a second person must approve it.`);
	throw new MasterError('wrong-state', `${name} is ${row.status}: it cannot be ${action === 'edit' ? 'edited' : `given "${action}"`} now.`);
}

/** A template as stored for a version: its version number and status in the header. */
function stamp(t: Template, version: number, status: MasterStatus): Template {
	return { ...t, header: { ...t.header, version, status } };
}

function validOrThrow(input: unknown): Template {
	const v = validateTemplate(input);
	if (!v.ok) throw new MasterError('invalid', `The template has ${v.issues.length} problem(s); nothing was saved.`, v.issues);
	return v.template;
}

async function lockRow(tx: Tx, id: string): Promise<MasterRecord> {
	const [row] = await tx.select().from(masterRecord).where(eq(masterRecord.id, id)).for('update');
	if (!row) throw new MasterError('not-found', 'No such master record.');
	return row;
}

/**
 * 21 CFR 11.70, 11.10(a): a signature binds the stored content hash, so that hash must still be
 * the hash of the stored template when it is signed; a template changed behind the services' back
 * is never signed (issue.ts does the same before issuing).
 */
function assertIntact(row: MasterRecord): void {
	if (hashTemplate(templateOf(row)) !== row.templateHash) {
		throw new MasterError('integrity', `${row.code} v${row.version}: the stored content does not match its hash; it was not signed.`);
	}
}

async function loadOrThrow(db: Database, id: string): Promise<MasterRecord> {
	const row = await findMaster(db, id);
	if (!row) throw new MasterError('not-found', 'No such master record.');
	return row;
}

const OPEN_STATES: MasterStatus[] = ['draft', 'in-review', 'approved'];

async function latestOfCode(tx: Tx, code: string): Promise<MasterRecord | null> {
	const [row] = await tx.select().from(masterRecord).where(eq(masterRecord.code, code)).orderBy(desc(masterRecord.version)).limit(1);
	return row ?? null;
}

async function openVersionOf(tx: Tx, code: string): Promise<MasterRecord | null> {
	const [row] = await tx.select().from(masterRecord).where(and(eq(masterRecord.code, code), inArray(masterRecord.status, OPEN_STATES))).limit(1);
	return row ?? null;
}

/** One open (draft, in review or approved) version per product at a time, so reviews never cross. */
function refuseOpen(open: MasterRecord): never {
	throw new MasterError('open-version', `${open.code} v${open.version} is still ${open.status}: finish or retire it first.`);
}

async function insertVersion(uow: UnitOfWork, t: Template, version: number, basedOnId: string | null, action: string, reason: string | null): Promise<string> {
	const id = randomUUID();
	const stored = stamp(t, version, 'draft');
	const templateHash = hashTemplate(stored);
	const author = uow.actor.id;
	try {
		await uow.tx.insert(masterRecord).values({
			id,
			code: stored.header.productCode,
			version,
			product: stored.header.productName,
			status: 'draft',
			template: stored,
			templateHash,
			createdBy: author,
			basedOnId,
			authors: author ? [author] : []
		});
	} catch (err) {
		if (pgErrorCode(err) === '23505') throw new MasterError('code-taken', `${stored.header.productCode} v${version} exists already.`);
		throw err;
	}
	await uow.audit({ action, entityType: MASTER_ENTITY, entityId: id, after: { code: stored.header.productCode, version, product: stored.header.productName, status: 'draft', templateHash, basedOnId }, reason });
	return id;
}

/** A new master record (a product code not used yet) as version 1 draft. */
export async function createMaster(db: Database, user: SessionUser, input: unknown): Promise<{ id: string }> {
	assertPermission(user, 'master.author');
	const t = validOrThrow(input);
	return runUnitOfWork(db, actorOf(user), async (uow) => {
		const latest = await latestOfCode(uow.tx, t.header.productCode);
		if (latest) throw new MasterError('code-taken', `${t.header.productCode} has master records already: make a new version of it.`);
		return { id: await insertVersion(uow, t, 1, null, 'master.create', null) };
	});
}

/**
 * Imports a template (Annex 11, 5: data from another system is checked): every issue is named
 * and nothing is saved if there is one. It becomes a draft of its product code. The file's
 * version number is kept when it is above every version of that code here, else the next number
 * is given (and `renumbered` says so): a site's history is never overwritten.
 */
export async function importMaster(db: Database, user: SessionUser, input: unknown, reason: string | null = null): Promise<{ id: string; version: number; renumbered: boolean; templateHash: string }> {
	assertPermission(user, 'master.author');
	const t = validOrThrow(input);
	return runUnitOfWork(db, actorOf(user), async (uow) => {
		const code = t.header.productCode;
		const open = await openVersionOf(uow.tx, code);
		if (open) refuseOpen(open);
		const latest = await latestOfCode(uow.tx, code);
		const version = !latest || t.header.version > latest.version ? t.header.version : latest.version + 1;
		const id = await insertVersion(uow, t, version, null, 'master.import', reason);
		return { id, version, renumbered: version !== t.header.version, templateHash: hashTemplate(stamp(t, version, 'draft')) };
	});
}

/** A new version: a copy of the latest version of the product, as a draft (design.md, lifecycle). */
export async function createNewVersion(db: Database, user: SessionUser, fromId: string): Promise<{ id: string; version: number }> {
	const from = await loadOrThrow(db, fromId);
	assertTransition(user, from, 'new-version');
	return runUnitOfWork(db, actorOf(user), async (uow) => {
		const open = await openVersionOf(uow.tx, from.code);
		if (open) refuseOpen(open);
		const latest = (await latestOfCode(uow.tx, from.code))!;
		const version = latest.version + 1;
		const id = await insertVersion(uow, templateOf(latest), version, latest.id, 'master.new-version', null);
		return { id, version };
	});
}

/**
 * Saves a draft's whole template. Only a draft can be edited (an approved version never changes,
 * and a trigger refuses it in the database too); the product code stays (another code is another
 * master); `revision` must be the one the author loaded, so two editors never overwrite each other.
 */
export async function saveDraft(db: Database, user: SessionUser, id: string, input: { template: unknown; revision: number }): Promise<{ revision: number; templateHash: string; changes: number }> {
	const row = await loadOrThrow(db, id);
	assertTransition(user, row, 'edit');
	const t = validOrThrow(input.template);
	if (t.header.productCode !== row.code) {
		const issue: TemplateIssue = { path: ['header', 'productCode'], code: 'master.code-fixed', message: `the product code of this master is ${row.code}; a new code is a new master record` };
		throw new MasterError('invalid', 'The product code cannot change.', [issue]);
	}
	return runUnitOfWork(db, actorOf(user), async (uow) => {
		const locked = await lockRow(uow.tx, id);
		assertTransition(user, locked, 'edit');
		if (locked.revision !== input.revision) throw new MasterError('stale', 'Someone saved this draft since you opened it. Reload it; your changes were not saved.');
		const stored = stamp(t, locked.version, 'draft');
		const templateHash = hashTemplate(stored);
		const diff = diffTemplates(templateOf(locked), stored);
		const authors = [...new Set([...locked.authors, user.id])];
		await uow.tx
			.update(masterRecord)
			.set({ template: stored, templateHash, product: stored.header.productName, authors, revision: locked.revision + 1, updatedAt: sql`now()` })
			.where(eq(masterRecord.id, id));
		// Annex 11, 9: the change itself, readable, in the audit trail.
		await uow.audit({
			action: 'master.update',
			entityType: MASTER_ENTITY,
			entityId: id,
			before: { templateHash: locked.templateHash, revision: locked.revision },
			after: { templateHash, revision: locked.revision + 1, counts: diff.counts, changes: diff.changes.slice(0, 200) }
		});
		return { revision: locked.revision + 1, templateHash, changes: diff.changes.length };
	});
}

export { masterSignatureContent };

async function setStatus(uow: UnitOfWork, row: MasterRecord, status: MasterStatus, extra: PgUpdateSetSource<typeof masterRecord>, action: string, reason: string | null): Promise<void> {
	await uow.tx
		.update(masterRecord)
		.set({ ...extra, status, template: stamp(templateOf(row), row.version, status), revision: row.revision + 1, updatedAt: sql`now()` })
		.where(eq(masterRecord.id, row.id));
	await uow.audit({ action, entityType: MASTER_ENTITY, entityId: row.id, before: { status: row.status }, after: { status, code: row.code, version: row.version, templateHash: row.templateHash }, reason });
}

/** Submits a draft for review, signed "authored" by its author (211.186(a): written and signed by one person). */
export async function submitMaster(db: Database, input: SigningInput & { id: string }): Promise<void> {
	const row = await loadOrThrow(db, input.id);
	assertTransition(input.user, row, 'submit');
	validOrThrow(row.template);
	const proof = await verifySigner(db, { signer: input.user, session: input.session, meaning: 'authored', credentials: input.credentials, address: input.address ?? 'unknown', relyingParty: input.relyingParty });
	await runUnitOfWork(db, actorOf(input.user), async (uow) => {
		const locked = await lockRow(uow.tx, input.id);
		assertTransition(input.user, locked, 'submit');
		assertIntact(locked);
		await signRecord(uow, proof, { meaning: 'authored', entityType: MASTER_ENTITY, entityId: locked.id, content: masterSignatureContent(locked, 'authored') });
		await setStatus(uow, locked, 'in-review', { submittedBy: input.user.id, submittedAt: sql`now()`, authors: [...new Set([...locked.authors, input.user.id])] }, 'master.submit', null);
	});
}

/** Sends a version in review back to draft (QA, or its author withdrawing it), with the reason. */
export async function returnMaster(db: Database, user: SessionUser, id: string, reason: string): Promise<void> {
	if (!reason.trim()) throw new MasterError('reason-required', 'Give the reason it goes back to draft.');
	const row = await loadOrThrow(db, id);
	assertTransition(user, row, 'return');
	await runUnitOfWork(db, actorOf(user), async (uow) => {
		const locked = await lockRow(uow.tx, id);
		assertTransition(user, locked, 'return');
		await setStatus(uow, locked, 'draft', { submittedBy: null, submittedAt: null }, 'master.return', reason.trim());
	});
}

/**
 * QA approves a version in review, signed "approved"; never a person who wrote or submitted that
 * version (21 CFR 211.186(a): independently checked and signed by a second person).
 */
export async function approveMaster(db: Database, input: SigningInput & { id: string }): Promise<void> {
	const row = await loadOrThrow(db, input.id);
	assertTransition(input.user, row, 'approve');
	const proof = await verifySigner(db, { signer: input.user, session: input.session, meaning: 'approved', credentials: input.credentials, address: input.address ?? 'unknown', relyingParty: input.relyingParty });
	await runUnitOfWork(db, actorOf(input.user), async (uow) => {
		const locked = await lockRow(uow.tx, input.id);
		assertTransition(input.user, locked, 'approve');
		assertIntact(locked);
		await signRecord(uow, proof, { meaning: 'approved', entityType: MASTER_ENTITY, entityId: locked.id, content: masterSignatureContent(locked, 'approved') });
		await setStatus(uow, locked, 'approved', { approvedBy: input.user.id, approvedAt: sql`now()` }, 'master.approve', null);
	});
}

/** Makes an approved version effective; the version effective until now becomes superseded. */
export async function makeEffective(db: Database, user: SessionUser, id: string, reason: string | null = null): Promise<{ superseded: string | null }> {
	const row = await loadOrThrow(db, id);
	assertTransition(user, row, 'make-effective');
	return runUnitOfWork(db, actorOf(user), async (uow) => {
		const locked = await lockRow(uow.tx, id);
		assertTransition(user, locked, 'make-effective');
		const [current] = await uow.tx.select().from(masterRecord).where(and(eq(masterRecord.code, locked.code), eq(masterRecord.status, 'effective'))).for('update');
		// Superseded first: the unique index allows one effective version per product at any moment.
		if (current) await setStatus(uow, current, 'superseded', { supersededAt: sql`now()` }, 'master.supersede', `superseded by v${locked.version}`);
		await setStatus(uow, locked, 'effective', { effectiveAt: sql`now()` }, 'master.make-effective', reason);
		return { superseded: current?.id ?? null };
	});
}

/** Retires a version: it can never be issued again. The reason is recorded. */
export async function retireMaster(db: Database, user: SessionUser, id: string, reason: string): Promise<void> {
	if (!reason.trim()) throw new MasterError('reason-required', 'Give the reason for retiring this version.');
	const row = await loadOrThrow(db, id);
	assertTransition(user, row, 'retire');
	await runUnitOfWork(db, actorOf(user), async (uow) => {
		const locked = await lockRow(uow.tx, id);
		assertTransition(user, locked, 'retire');
		await setStatus(uow, locked, 'retired', { retiredAt: sql`now()` }, 'master.retire', reason.trim());
	});
}
