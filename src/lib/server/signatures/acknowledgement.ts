import { randomUUID } from 'node:crypto';
import { desc, eq } from 'drizzle-orm';
import type { Database, Executor } from '../db/client';
import { acknowledgement, signature } from '../db/schema';
import { runUnitOfWork } from '../work';
import { actorOf } from '../auth/account';
import { signRecord, verifySigner, type SignatureCredentials, type SignatureRecord } from './ceremony';
import type { RelyingParty } from '../auth/passkey';
import type { SessionInfo, SessionUser } from '../auth/types';

/**
 * The signature-accountability acknowledgement (21 CFR 11.100(c): persons certify that their
 * electronic signatures are the legally binding equivalent of their handwritten signatures;
 * 11.10(j): the written policy holding them accountable). It is itself signed with meaning
 * `acknowledged`, and may be renewed (sites often ask for it yearly with training, 11.10(i)).
 */
export const STATEMENT_VERSION = 'esig-accountability-1';

export interface AcknowledgementContent {
	kind: 'signature-acknowledgement';
	statementVersion: string;
	locale: string;
	/** Exactly the text shown to and signed by the person. */
	statement: string;
	userId: string;
	username: string;
	printedName: string;
}

export function acknowledgementContent(u: SessionUser, statement: string, locale: string): AcknowledgementContent {
	return { kind: 'signature-acknowledgement', statementVersion: STATEMENT_VERSION, locale, statement, userId: u.id, username: u.username, printedName: u.name };
}

export async function signAcknowledgement(
	db: Database,
	request: { signer: SessionUser; session: SessionInfo | null; credentials: SignatureCredentials; address: string; relyingParty: RelyingParty; statement: string; locale: string }
): Promise<SignatureRecord> {
	const proof = await verifySigner(db, { ...request, meaning: 'acknowledged' });
	const content = acknowledgementContent(request.signer, request.statement, request.locale);
	return runUnitOfWork(db, actorOf(request.signer), async (uow) => {
		const id = randomUUID();
		const sig = await signRecord(uow, proof, { meaning: 'acknowledged', entityType: 'acknowledgement', entityId: id, content });
		await uow.tx.insert(acknowledgement).values({ id, userId: request.signer.id, statementVersion: STATEMENT_VERSION, content, signatureId: sig.id });
		await uow.audit({ action: 'acknowledgement.create', entityType: 'acknowledgement', entityId: id, after: { userId: request.signer.id, statementVersion: STATEMENT_VERSION, signatureId: sig.id } });
		return sig;
	});
}

export interface AcknowledgementView {
	id: string;
	statementVersion: string;
	statement: string;
	signature: { printedName: string; meaning: string; at: string; timeZone: string; method: string; contentHash: string };
}

export async function listAcknowledgements(db: Executor, userId: string): Promise<AcknowledgementView[]> {
	const rows = await db
		.select({ a: acknowledgement, s: signature })
		.from(acknowledgement)
		.innerJoin(signature, eq(signature.id, acknowledgement.signatureId))
		.where(eq(acknowledgement.userId, userId))
		.orderBy(desc(signature.at));
	return rows.map(({ a, s }) => ({
		id: a.id,
		statementVersion: a.statementVersion,
		statement: (a.content as AcknowledgementContent).statement,
		signature: { printedName: s.printedName, meaning: s.meaning, at: s.at, timeZone: s.timeZone, method: s.method, contentHash: s.contentHash }
	}));
}
