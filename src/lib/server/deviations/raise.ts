import { randomUUID } from 'node:crypto';
import { eq, sql } from 'drizzle-orm';
import { cycleRun, deviation } from '../db/schema';
import type { UnitOfWork } from '../work';
import type { DeviationClassification } from '$lib/domain/deviation-lifecycle';
import { notifyDeviation } from './notify';

/**
 * Raising a deviation (21 CFR 211.100(b): deviations are recorded and justified; 211.192). The
 * stable entry point for every area: batch execution raises out-of-limit deviations, the cycles
 * area raises cycle excursions; issue 8 adds the investigation workflow around these rows.
 */
export interface RaiseDeviationInput {
	batchId: string | null;
	stepKey?: string | null;
	/** The step entry that raised it (an out-of-limit value). */
	entryId?: string | null;
	/** The cycle run that raised it (a freeze-drying excursion). */
	runId?: string | null;
	source: 'auto' | 'manual';
	/** out-of-limit, cycle-excursion, … (free text of the raising area, kebab-case). */
	kind: string;
	title: string;
	description: string;
	/** Optional at raising (manual raises may know it); required before submission. */
	classification?: DeviationClassification | null;
	/** What was done at once to contain the event (common GMP practice: recorded when raised). */
	immediateAction?: string | null;
}

export interface RaisedDeviation {
	id: string;
	number: string;
}

/**
 * Writes the deviation and its audit event in the caller's unit of work, so it commits with the
 * record that raised it or not at all. Numbers are DEV-<year>-<nnnn> from a database sequence:
 * unique under concurrency; a rolled-back raise leaves a gap in the numbers (sequences are not
 * transactional), which the audit trail explains (no event for the missing number).
 */
export async function raiseDeviation(uow: UnitOfWork, input: RaiseDeviationInput): Promise<RaisedDeviation> {
	const source = await sourceOf(uow, input);
	const result = await uow.tx.execute<{ n: string; year: string }>(sql`select nextval('deviation_number_seq')::text as n, extract(year from now())::int::text as year`);
	const row = (result as unknown as { rows: { n: string; year: string }[] }).rows[0];
	const number = `DEV-${row.year}-${row.n.padStart(4, '0')}`;
	const id = randomUUID();
	const values = {
		id,
		number,
		batchId: input.batchId,
		stepKey: input.stepKey ?? null,
		entryId: source.entryId,
		runId: source.runId,
		source: input.source,
		kind: input.kind,
		title: input.title,
		description: input.description,
		status: 'open' as const,
		classification: input.classification ?? null,
		immediateAction: blankToNull(input.immediateAction),
		createdBy: uow.actor.id,
		createdByName: uow.actor.name
	};
	await uow.tx.insert(deviation).values(values);
	await uow.audit({ action: 'deviation.raise', entityType: 'deviation', entityId: id, batchId: input.batchId, after: values });
	// QA learns of every deviation, automatic or manual (issue 8); queued in this transaction.
	await notifyDeviation(uow, 'deviation-raised', { id, number, title: input.title, batchId: input.batchId });
	return { id, number };
}

export function blankToNull(v: string | null | undefined): string | null {
	const t = v?.trim();
	return t ? t : null;
}

/**
 * Which record raised the deviation. The cycles upload passes its run id as `entryId` (written
 * before `runId` existed); a step entry and a run never share an id (both random UUIDs), so an
 * `entryId` that names a cycle run is taken as the run — entry_id then only ever names a step
 * entry, and run_id's foreign key proves the run exists.
 */
async function sourceOf(uow: UnitOfWork, input: RaiseDeviationInput): Promise<{ entryId: string | null; runId: string | null }> {
	const entryId = input.entryId ?? null;
	if (input.runId) return { entryId, runId: input.runId };
	if (entryId === null) return { entryId: null, runId: null };
	const [run] = await uow.tx.select({ id: cycleRun.id }).from(cycleRun).where(eq(cycleRun.id, entryId));
	return run ? { entryId: null, runId: run.id } : { entryId, runId: null };
}
