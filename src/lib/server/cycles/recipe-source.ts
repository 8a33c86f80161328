import { recipeSchema, type Recipe } from '$lib/domain/lyo/recipe';

interface SnapshotLike {
	sections?: { key?: string; steps?: { key?: string; fields?: { kind?: string; recipe?: unknown }[] }[] }[];
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
