import { inArray } from 'drizzle-orm';
import { OPEN_BATCH_STATUSES } from '$lib/domain/batch/status';
import { recipeSchema, type Recipe } from '$lib/domain/lyo/recipe';
import type { Executor } from '../db/client';
import { batch } from '../db/schema';

/** The part of a frozen template snapshot (src/lib/schemas/template.ts) read here, defensively. */
interface SnapshotLike {
	sections?: { key?: string; steps?: { key?: string; title?: string; fields?: { kind?: string; recipe?: unknown }[] }[] }[];
}

/**
 * The freeze-drying recipe of a step in a batch's frozen template snapshot (the `recipe` field
 * kind of src/lib/schemas/template.ts). The snapshot is re-validated with recipeSchema so an
 * analysis never runs on a recipe the schema would refuse. `stepKey` is the step's key, or
 * "section.step" when keys repeat across sections.
 */
export function findStepRecipe(snapshot: unknown, stepKey: string): Recipe | null {
	const sections = (snapshot as SnapshotLike | null)?.sections ?? [];
	for (const section of sections) {
		for (const step of section.steps ?? []) {
			if (step.key !== stepKey && `${section.key}.${step.key}` !== stepKey) continue;
			const field = (step.fields ?? []).find((f) => f.kind === 'recipe');
			if (!field) return null;
			const parsed = recipeSchema.safeParse(field.recipe);
			return parsed.success ? parsed.data : null;
		}
	}
	return null;
}

export interface OpenRecipeBatch {
	id: string;
	number: string;
	/** the batch's steps with a freeze-drying recipe, in template order */
	steps: { key: string; title: string }[];
}

/**
 * Batches still open (OPEN_BATCH_STATUSES, the rule every batch writer uses) with at least one
 * freeze-drying step: what a run can be imported for (REVIEW finding 10). A step is listed only
 * when findStepRecipe accepts its recipe, so the list never offers a step the import refuses.
 */
export async function listOpenRecipeSteps(db: Executor): Promise<OpenRecipeBatch[]> {
	const open = await db.select({ id: batch.id, number: batch.number, snapshot: batch.snapshot }).from(batch).where(inArray(batch.status, [...OPEN_BATCH_STATUSES]));
	return open
		.map((b) => ({
			id: b.id,
			number: b.number,
			steps: ((b.snapshot as SnapshotLike | null)?.sections ?? [])
				.flatMap((s) => s.steps ?? [])
				.filter((s) => s.key && findStepRecipe(b.snapshot, s.key))
				.map((s) => ({ key: s.key ?? '', title: s.title ?? '' }))
		}))
		.filter((b) => b.steps.length > 0);
}
