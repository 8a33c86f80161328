/**
 * Invented recipes for tests (no real product or site). The critical temperature −32 °C is the
 * typical literature Tg′ of sucrose (lyophilization.md, "Product facts", from memory); the 2 °C
 * margin is Tang & Pikal's rule of thumb for long cycles (from memory, as quoted there).
 */
import type { Recipe, RecipeStep } from '../../../src/lib/domain/lyo/recipe';

export function atmosphericStep(
	shelfSetpointC: number,
	rampRateCPerMin: number,
	holdMin: number
): RecipeStep {
	return {
		shelfSetpointC,
		rampRateCPerMin,
		holdMin,
		chamberPressurePa: null,
		shelfToleranceC: 3,
		pressureMinPa: null,
		pressureMaxPa: null
	};
}

export function vacuumStep(
	shelfSetpointC: number,
	rampRateCPerMin: number,
	holdMin: number,
	pressurePa: number,
	minPa: number,
	maxPa: number
): RecipeStep {
	return {
		shelfSetpointC,
		rampRateCPerMin,
		holdMin,
		chamberPressurePa: pressurePa,
		shelfToleranceC: 3,
		pressureMinPa: minPa,
		pressureMaxPa: maxPa
	};
}

/**
 * Plan: freezing 5 → −5 °C (10 min) hold 30, → −45 °C at 0.5 °C/min (80 min) hold 120;
 * primary −45 → −20 °C at 0.5 °C/min (50 min) hold 1200 min at 10 Pa (8–12 Pa);
 * secondary → +25 °C at 0.2 °C/min (225 min) hold 360 min at 10 Pa (5–15 Pa).
 * Planned phase starts: primary 14 400 s, secondary 89 400 s; end 124 500 s.
 */
export function createSucroseRecipe(): Recipe {
	return {
		loadingShelfC: 5,
		freezing: { steps: [atmosphericStep(-5, 1, 30), atmosphericStep(-45, 0.5, 120)] },
		annealing: null,
		primaryDrying: { steps: [vacuumStep(-20, 0.5, 1200, 10, 8, 12)] },
		secondaryDrying: { steps: [vacuumStep(25, 0.2, 360, 10, 5, 15)] },
		product: { criticalTemperatureC: -32, criticalKind: 'collapse', marginC: 2 }
	};
}

/**
 * With annealing (as for crystallising bulking agents): after the freezing of
 * createSucroseRecipe, warm to −20 °C at 0.5 °C/min (50 min), hold 180 min, re-freeze to
 * −45 °C at 0.5 °C/min (50 min), hold 60 min. Annealing starts at 14 400 s; primary at 33 000 s.
 */
export function createAnnealedRecipe(): Recipe {
	const r = createSucroseRecipe();
	r.annealing = { steps: [atmosphericStep(-20, 0.5, 180), atmosphericStep(-45, 0.5, 60)] };
	return r;
}
