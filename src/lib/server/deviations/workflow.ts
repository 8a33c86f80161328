import { eq, sql } from 'drizzle-orm';
import type { PgUpdateSetSource } from 'drizzle-orm/pg-core';
import type { Database, Tx } from '../db/client';
import { deviation, type Deviation } from '../db/schema';
import { runUnitOfWork } from '../work';
import { actorOf } from '../auth/account';
import type { RelyingParty } from '../auth/passkey';
import type { SessionInfo, SessionUser } from '../auth/types';
import { hashContent, signRecord, verifySigner, type SignatureCredentials } from '../signatures/ceremony';
import { hasPermission, type Permission } from '$lib/domain/permissions';
import {
	checkDeviationAction,
	deviationLifecycle,
	type DeviationAction,
	type DeviationClassification,
	type DeviationFacts,
	type DeviationTransition
} from '$lib/domain/deviation-lifecycle';
import { DeviationError } from './errors';
import { blankToNull } from './raise';
import { notifyDeviation } from './notify';
import { investigatorsOf, type DeviationDetail } from './queries';

/**
 * The deviation workflow services (issue 8; $lib/domain/deviation-lifecycle holds the rules).
 * Every signed transition runs the signing ceremony first (verifySigner), then writes the change,
 * its audit event and the signature in one unit of work (21 CFR 11.10(e), 11.50, 11.70): all three
 * commit or none does. Each service checks the rules again inside its transaction with the row
 * locked and the version compared, so two people acting at once cannot both pass (11.10(f)).
 */

export const DEVIATION_ENTITY = 'deviation';

const workflowPermissions: readonly Permission[] = ['deviation.read', 'deviation.raise', 'deviation.approve'];

export function permissionsOfDeviationUser(user: SessionUser): Permission[] {
	return workflowPermissions.filter((p) => hasPermission(user.roles, p) && (!user.tokenPermissions || user.tokenPermissions.includes(p)));
}

export interface TransitionInput {
	id: string;
	action: DeviationTransition;
	/** The version the person saw; a change since then is refused (409), never overwritten. */
	expectedVersion: number;
	/** Required for send-back and cancel (Annex 11, 9: the reason is recorded). */
	reason?: string | null;
	/** QA's closing words, stored with the closure. */
	closureComment?: string | null;
	user: SessionUser;
	session: SessionInfo | null;
	credentials: SignatureCredentials;
	address?: string;
	relyingParty?: RelyingParty;
}

export interface TransitionResult {
	id: string;
	status: string;
	version: number;
	signatureId: string;
}

/** Editable fields (before submission only). */
export interface DeviationFields {
	title?: string;
	description?: string;
	classification?: DeviationClassification | null;
	immediateAction?: string | null;
	investigation?: string | null;
	rootCause?: string | null;
	impact?: string | null;
	capaRefs?: string[];
}

function factsOf(row: Deviation, investigators: readonly string[]): DeviationFacts {
	return { status: row.status, classification: row.classification, investigation: row.investigation, rootCause: row.rootCause, impact: row.impact, submittedBy: row.submittedBy, investigators };
}

const fieldLabels: Record<string, string> = { classification: 'classification', investigation: 'investigation', rootCause: 'root cause', impact: 'impact on the batch' };

/**
 * Turns a refusal of the rules into the error the routes map (403, 409, 422). `investigators`
 * (investigatorsOf) matters for closure only; it is required so that no caller of a closure can
 * forget it and fall back to the submitter-only rule.
 */
export function assertDeviationAction(user: SessionUser, row: Deviation, action: DeviationAction, reason: string | null | undefined, investigators: readonly string[]): void {
	const r = checkDeviationAction(action, factsOf(row, investigators), { id: user.id, permissions: permissionsOfDeviationUser(user) }, { reason });
	if (r.ok) return;
	switch (r.reason) {
		case 'not-permitted':
			throw new DeviationError('forbidden', 'Your roles do not allow this.');
		case 'wrong-state':
			throw new DeviationError('wrong-state', `${row.number} is ${row.status}: "${action}" is not possible now.`);
		case 'reason-required':
			throw new DeviationError('reason-required', 'Give a reason for this step.');
		case 'incomplete': {
			const missing = r.missing ?? [];
			// 21 CFR 211.192: the investigation, its conclusions and the extent are written down first.
			throw new DeviationError('incomplete', `${row.number} is missing: ${missing.map((m) => fieldLabels[m]).join(', ')}.`, missing);
		}
		case 'own-submission':
			throw new DeviationError('own-submission', `You took part in the investigation of ${row.number}: another QA person must approve its closure.`);
	}
}

async function lockRow(tx: Tx, id: string): Promise<Deviation> {
	const [row] = await tx.select().from(deviation).where(eq(deviation.id, id)).for('update');
	if (!row) throw new DeviationError('not-found', 'No such deviation.');
	return row;
}

async function findRow(db: Database, id: string): Promise<Deviation> {
	const [row] = await db.select().from(deviation).where(eq(deviation.id, id));
	if (!row) throw new DeviationError('not-found', 'No such deviation.');
	return row;
}

function assertVersion(row: Deviation, expected: number): void {
	if (row.version !== expected) {
		throw new DeviationError('stale-version', `${row.number} was changed by someone else meanwhile (version ${row.version}, you saw ${expected}). Reload and check before you act.`, [], row.version);
	}
}

/** The content a transition signature binds (11.70): the deviation as it stands after the step. */
export function deviationSignatureContent(row: Deviation, action: DeviationTransition, reason: string | null) {
	return {
		deviation: row.id,
		number: row.number,
		batchId: row.batchId,
		stepKey: row.stepKey,
		action,
		status: row.status,
		version: row.version,
		title: row.title,
		description: row.description,
		classification: row.classification,
		immediateAction: row.immediateAction,
		investigation: row.investigation,
		rootCause: row.rootCause,
		impact: row.impact,
		capaRefs: row.capaRefs,
		cancelReason: row.cancelReason,
		closureComment: row.closureComment,
		reason
	};
}

/**
 * One signed step of the lifecycle. Refusals before the ceremony (role, state, missing fields,
 * version) cost the person no password; the same checks run again under the row lock.
 */
export async function transitionDeviation(db: Database, input: TransitionInput): Promise<TransitionResult> {
	const rule = deviationLifecycle[input.action];
	if (!rule || rule.meaning === null) throw new DeviationError('invalid-input', 'Unknown step.');
	const reason = blankToNull(input.reason);
	const before = await findRow(db, input.id);
	// Closure: everyone who wrote or submitted the investigation, in any round, is excluded.
	const investigators = (executor: Database | Tx) => (input.action === 'close' ? investigatorsOf(executor, input.id) : Promise.resolve([]));
	assertDeviationAction(input.user, before, input.action, reason, await investigators(db));
	assertVersion(before, input.expectedVersion);
	const proof = await verifySigner(db, { signer: input.user, session: input.session, meaning: rule.meaning, credentials: input.credentials, address: input.address ?? 'unknown', relyingParty: input.relyingParty });
	return runUnitOfWork(db, actorOf(input.user), async (uow) => {
		const row = await lockRow(uow.tx, input.id);
		// Version first under the lock: a change that won the race is reported as such (409 stale).
		assertVersion(row, input.expectedVersion);
		assertDeviationAction(input.user, row, input.action, reason, await investigators(uow.tx));
		const change: PgUpdateSetSource<typeof deviation> = { status: rule.to!, version: row.version + 1, updatedAt: sql`now()` };
		if (input.action === 'submit') Object.assign(change, { submittedBy: input.user.id, submittedAt: sql`now()` });
		if (input.action === 'cancel') change.cancelReason = reason;
		if (input.action === 'close') change.closureComment = blankToNull(input.closureComment);
		const [after] = await uow.tx.update(deviation).set(change).where(eq(deviation.id, row.id)).returning();
		await uow.audit({
			action: `deviation.${input.action}`,
			entityType: DEVIATION_ENTITY,
			entityId: row.id,
			batchId: row.batchId,
			before: { status: row.status, version: row.version },
			after: { status: after.status, version: after.version, ...(input.action === 'cancel' ? { cancelReason: after.cancelReason } : {}), ...(input.action === 'close' ? { closureComment: after.closureComment } : {}) },
			reason
		});
		const signed = await signRecord(uow, proof, { meaning: rule.meaning!, entityType: DEVIATION_ENTITY, entityId: row.id, batchId: row.batchId, content: deviationSignatureContent(after, input.action, reason) });
		if (input.action === 'submit') await notifyDeviation(uow, 'deviation-awaiting-approval', { id: row.id, number: row.number, title: row.title, batchId: row.batchId });
		return { id: row.id, status: after.status, version: after.version, signatureId: signed.id };
	});
}

const editableKeys = ['title', 'description', 'classification', 'immediateAction', 'investigation', 'rootCause', 'impact', 'capaRefs'] as const;

function normalise(key: (typeof editableKeys)[number], value: unknown): unknown {
	if (key === 'capaRefs') return [...new Set((value as string[]).map((s) => s.trim()).filter(Boolean))];
	if (key === 'title' || key === 'description') return String(value).trim();
	if (key === 'classification') return value ?? null;
	return blankToNull(value as string | null);
}

/**
 * Field edits while the deviation is open or under investigation: not signed, but audited with
 * the old and new value of each changed field (21 CFR 11.10(e); Annex 11, 9). Refused once the
 * investigation is submitted (the record under QA approval does not change). A request that
 * changes nothing writes nothing.
 */
export async function updateDeviation(db: Database, user: SessionUser, input: { id: string; expectedVersion: number; fields: DeviationFields }): Promise<{ id: string; version: number; changed: string[] }> {
	const current = await findRow(db, input.id);
	assertDeviationAction(user, current, 'edit', undefined, []);
	assertVersion(current, input.expectedVersion);
	const plan = (row: Deviation) => {
		const before: Record<string, unknown> = {};
		const after: Record<string, unknown> = {};
		for (const key of editableKeys) {
			if (input.fields[key] === undefined) continue;
			const next = normalise(key, input.fields[key]);
			if (JSON.stringify(next) === JSON.stringify(row[key])) continue;
			before[key] = row[key];
			after[key] = next;
		}
		return { before, after };
	};
	const planned = plan(current);
	if ((planned.after.title as string | undefined) === '' || (planned.after.description as string | undefined) === '') throw new DeviationError('invalid-input', 'Title and description cannot be empty.');
	if (Object.keys(planned.after).length === 0) return { id: current.id, version: current.version, changed: [] };
	return runUnitOfWork(db, actorOf(user), async (uow) => {
		const row = await lockRow(uow.tx, input.id);
		assertVersion(row, input.expectedVersion);
		assertDeviationAction(user, row, 'edit', undefined, []);
		const { before, after } = plan(row);
		const [updated] = await uow.tx
			.update(deviation)
			.set({ ...(after as PgUpdateSetSource<typeof deviation>), version: row.version + 1, updatedAt: sql`now()` })
			.where(eq(deviation.id, row.id))
			.returning({ version: deviation.version });
		await uow.audit({ action: 'deviation.edit', entityType: DEVIATION_ENTITY, entityId: row.id, batchId: row.batchId, before, after: { ...after, version: updated.version } });
		return { id: row.id, version: updated.version, changed: Object.keys(after) };
	});
}

const transitionActions: readonly string[] = ['start-investigation', 'submit', 'send-back', 'close', 'cancel'];

/**
 * 11.70: whether the latest signature still matches the deviation as stored. A transition signs
 * the deviation as it stood right after the step, with the step's reason. When audited, unsigned
 * edits followed (allowed while investigating) the row is no longer what was signed: null, not
 * checked (the audit trail holds each edit's old and new values). False means the row changed
 * without an event: behind the application's back.
 */
export function isLatestSignatureBound(d: Pick<DeviationDetail, 'events' | 'signatures'> & Deviation): boolean | null {
	const sig = d.signatures.at(-1);
	const last = [...d.events].reverse().find((e) => e.action !== 'signature.sign');
	const action = last?.action.replace(/^deviation\./, '') ?? '';
	if (!sig || !last || !transitionActions.includes(action)) return null;
	return hashContent(deviationSignatureContent(d, action as DeviationTransition, last.reason)) === sig.contentHash;
}
