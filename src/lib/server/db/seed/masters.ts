import { eq } from 'drizzle-orm';
import type { Database } from '../client';
import { session } from '../schema';
import type { UnitOfWork } from '../../work';
import { createUserSession, rolesOf } from '../../auth/session';
import type { SessionInfo, SessionUser } from '../../auth/types';
import { approveMaster, createMaster, createNewVersion, makeEffective, saveDraft, submitMaster } from '../../masters/lifecycle';
import { issueBatch } from '../../masters/issue';
import { findMaster } from '../../masters/query';
import { demoTemplateInput } from '$lib/domain/fixtures/demo-template';
import type { TemplateInput } from '$lib/schemas/template';
import type { SeedContext } from './index';

/**
 * The demo master record, made the way a site makes one: the author writes version 1 and signs it
 * "authored", QA approves it (a second person, 21 CFR 211.186(a)) and makes it effective; the
 * author then writes version 2 (the demo template), QA approves it and makes it effective, which
 * supersedes version 1; QA issues one batch of 12 L. Every signature goes through the real
 * ceremony with the demo password. The seed's transaction stands in for the database, so the
 * services' own units of work become savepoints of it and the whole demo commits or not at all.
 */
export async function seedMasters(uow: UnitOfWork, context: SeedContext): Promise<void> {
	const db = uow.tx as unknown as Database;
	const author = await signerOf(db, context, 'author');
	const qa = await signerOf(db, context, 'qa');
	const firstSignature = (who: Signer) => ({ method: 'password' as const, username: who.user.username, password: context.password });
	const laterSignature = { method: 'password' as const, password: context.password };
	const address = 'seed';

	const { id: v1 } = await createMaster(db, author.user, versionOne());
	await submitMaster(db, { ...author, id: v1, credentials: firstSignature(author), address });
	await approveMaster(db, { ...qa, id: v1, credentials: firstSignature(qa), address });
	await makeEffective(db, qa.user, v1, 'Demo scenario seeded');

	const { id: v2 } = await createNewVersion(db, author.user, v1);
	const draft = await findMaster(db, v2);
	await saveDraft(db, author.user, v2, { template: demoTemplateInput, revision: draft!.revision });
	await submitMaster(db, { ...author, session: await refreshed(db, author), id: v2, credentials: laterSignature, address });
	await approveMaster(db, { ...qa, session: await refreshed(db, qa), id: v2, credentials: laterSignature, address });
	await makeEffective(db, qa.user, v2, 'Demo scenario seeded');

	await issueBatch(db, { ...qa, session: await refreshed(db, qa), masterRecordId: v2, batchSize: 12, credentials: laterSignature, address });
}

interface Signer {
	user: SessionUser;
	session: SessionInfo;
}

async function signerOf(db: Database, context: SeedContext, username: string): Promise<Signer> {
	const person = context.people.get(username);
	if (!person) throw new Error(`The demo has no ${username}.`);
	const user: SessionUser = { id: person.id, username, name: person.name, kind: 'person', roles: await rolesOf(db, person.id), mustChangePassword: false, locale: 'en' };
	const { session } = await createUserSession(db, person.id, 'password');
	return { user, session };
}

/** The session as it is after its first signing (11.200(a)(1)(i): later ones need the password only). */
async function refreshed(db: Database, s: Signer): Promise<SessionInfo> {
	const [row] = await db.select({ firstSignedAt: session.firstSignedAt }).from(session).where(eq(session.id, s.session.id));
	return { ...s.session, firstSignedAt: row?.firstSignedAt ?? null };
}

/** Version 1 of the demo: the same process with the older fill-weight interval and mixing window. */
function versionOne(): TemplateInput {
	const t = structuredClone(demoTemplateInput) as TemplateInput;
	t.header.version = 1;
	t.header.status = 'draft';
	for (const section of t.sections) {
		for (const step of section.steps) {
			if (step.key === 'fill_weight_check') step.instructions = 'Every 60 minutes take 10 consecutive vials, weigh them filled and tared, and enter the net fill weights.';
			for (const field of step.fields ?? []) {
				if (field.key === 'mixing_time' && field.kind === 'number') field.limits = { kind: 'range', min: 10, max: 20 };
			}
		}
	}
	return t;
}
