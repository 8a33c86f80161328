import type { Database, Tx } from './db/client';
import { appendEvent, type Actor, type AuditInput } from './audit/ledger';

/** What a service gets inside a unit of work: the transaction, who acts, and the ledger. */
export interface UnitOfWork {
	tx: Tx;
	actor: Actor;
	/** Appends an audit event in this same transaction. */
	audit(input: AuditInput): Promise<{ seq: number; hash: string; at: string }>;
}

export class UnauditedWorkError extends Error {
	constructor() {
		super('A unit of work changed GMP data without an audit event; it was rolled back.');
		this.name = 'UnauditedWorkError';
	}
}

/**
 * The one write path for GMP data: the data change and its audit event(s) commit together or not
 * at all (21 CFR 11.10(e); design.md, "One write path"). A unit of work that appends no event is
 * rolled back, so no service can change GMP data silently.
 */
export async function runUnitOfWork<T>(db: Database, actor: Actor, work: (uow: UnitOfWork) => Promise<T>): Promise<T> {
	return db.transaction(async (tx) => {
		let events = 0;
		const uow: UnitOfWork = {
			tx,
			actor,
			async audit(input) {
				const appended = await appendEvent(tx, actor, input);
				events += 1;
				return appended;
			}
		};
		const result = await work(uow);
		if (events === 0) throw new UnauditedWorkError();
		return result;
	});
}
