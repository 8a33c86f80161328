import { eq } from 'drizzle-orm';
import type { Database } from '../db/client';
import { batch } from '../db/schema';
import { runUnitOfWork } from '../work';
import { actorOf } from '../auth/account';
import type { SessionUser } from '../auth/types';
import { hasPermission } from '$lib/domain/permissions';
import { isBatchOpen } from '$lib/domain/batch/status';
import type { DeviationClassification } from '$lib/domain/deviation-lifecycle';
import type { Template } from '$lib/schemas/template';
import { DeviationError } from './errors';
import { raiseDeviation, type RaisedDeviation } from './raise';

export interface ManualRaiseInput {
	batchId: string;
	stepKey?: string | null;
	title: string;
	description: string;
	classification?: DeviationClassification | null;
	immediateAction?: string | null;
}

/** Services check authority themselves too, not only the routes (21 CFR 11.10(g)). */
export function assertDeviationPermission(user: SessionUser, permission: 'deviation.raise' | 'deviation.approve' | 'deviation.read'): void {
	const granted = hasPermission(user.roles, permission) && (!user.tokenPermissions || user.tokenPermissions.includes(permission));
	if (!granted) throw new DeviationError('forbidden', 'Your roles do not allow this.');
}

function stepKeysOf(snapshot: unknown): Set<string> {
	const t = snapshot as Partial<Template> | null;
	return new Set((t?.sections ?? []).flatMap((s) => s.steps.map((st) => st.key)));
}

/**
 * A deviation raised by hand by someone executing the batch (21 CFR 211.100(b): deviations are
 * recorded and justified). The batch must still be open (an executed record that is released or
 * rejected takes nothing more; $lib/domain/batch/status) and the step, if named, must be one of
 * its snapshot. The batch row is share-locked so a disposition that locks it cannot pass its
 * open-deviation gate while this raise commits.
 */
export async function raiseManualDeviation(db: Database, user: SessionUser, input: ManualRaiseInput): Promise<RaisedDeviation> {
	assertDeviationPermission(user, 'deviation.raise');
	return runUnitOfWork(db, actorOf(user), async (uow) => {
		const [row] = await uow.tx.select({ id: batch.id, number: batch.number, status: batch.status, snapshot: batch.snapshot }).from(batch).where(eq(batch.id, input.batchId)).for('share');
		if (!row) throw new DeviationError('not-found', 'No such batch.');
		if (!isBatchOpen(row.status)) throw new DeviationError('batch-closed', `Batch ${row.number} is ${row.status}: it takes no new deviations.`);
		const stepKey = input.stepKey?.trim() || null;
		if (stepKey && !stepKeysOf(row.snapshot).has(stepKey)) throw new DeviationError('unknown-step', `Batch ${row.number} has no step "${stepKey}".`);
		return raiseDeviation(uow, {
			batchId: row.id,
			stepKey,
			source: 'manual',
			kind: 'manual',
			title: input.title.trim(),
			description: input.description.trim(),
			classification: input.classification ?? null,
			immediateAction: input.immediateAction ?? null
		});
	});
}
