import { describe, expect, it } from 'vitest';
import {
	evaluateProfile,
	expectedProfile,
	listRecipePhases,
	planPhaseDurations,
	planSteps,
	recipeSchema,
	type Recipe
} from '$lib/domain/lyo/recipe';
import { createAnnealedRecipe, createSucroseRecipe } from './fixtures';

describe('recipeSchema', () => {
	it('accepts the fixture recipes and survives a JSON round trip (embedding in a template)', () => {
		for (const r of [createSucroseRecipe(), createAnnealedRecipe()]) {
			expect(recipeSchema.parse(r)).toEqual(r);
			expect(recipeSchema.parse(JSON.parse(JSON.stringify(r)))).toEqual(r);
		}
	});

	const noVacuum = (r: Recipe) => {
		Object.assign(r.primaryDrying.steps[0], { chamberPressurePa: null, pressureMinPa: null, pressureMaxPa: null });
	};
	const vacuumFreezing = (r: Recipe) => {
		Object.assign(r.freezing.steps[0], { chamberPressurePa: 10, pressureMinPa: 5, pressureMaxPa: 15 });
	};
	const broken: [string, (r: Recipe) => void, string][] = [
		['a drying step without vacuum', noVacuum, 'primaryDrying.steps.0.chamberPressurePa'],
		['freezing under vacuum', vacuumFreezing, 'freezing.steps.0.chamberPressurePa'],
		[
			'a setpoint outside its own range',
			(r) => void (r.primaryDrying.steps[0].pressureMaxPa = 9),
			'primaryDrying.steps.0.chamberPressurePa'
		],
		[
			'a pressure range without a setpoint',
			(r) => void (r.freezing.steps[0].pressureMaxPa = 100),
			'freezing.steps.0.pressureMinPa'
		],
		[
			'a zero ramp rate',
			(r) => void (r.freezing.steps[0].rampRateCPerMin = 0),
			'freezing.steps.0.rampRateCPerMin'
		],
		[
			'a negative hold',
			(r) => void (r.secondaryDrying.steps[0].holdMin = -1),
			'secondaryDrying.steps.0.holdMin'
		],
		['a phase without steps', (r) => void (r.secondaryDrying.steps = []), 'secondaryDrying.steps'],
		[
			'an implausible shelf setpoint (typing error)',
			(r) => void (r.freezing.steps[1].shelfSetpointC = -450),
			'freezing.steps.1.shelfSetpointC'
		],
		[
			'an unknown critical kind',
			(r) => void ((r.product as { criticalKind: string }).criticalKind = 'melting'),
			'product.criticalKind'
		]
	];
	it.each(broken)('rejects %s', (_name, mutate, path) => {
		const r = createSucroseRecipe();
		mutate(r);
		const res = recipeSchema.safeParse(r);
		expect(res.success).toBe(false);
		expect(res.error?.issues.map((i) => i.path.join('.'))).toContain(path);
	});
});

describe('expectedProfile', () => {
	// Hand calculation from the fixture (fixtures.ts): ramp time = |Δ| / rate.
	// freezing: 5 → −5 °C at 1 °C/min = 10 min, hold 30; → −45 at 0.5 °C/min = 80 min, hold 120
	// primary: → −20 at 0.5 °C/min = 50 min, hold 1200; secondary: → 25 at 0.2 °C/min = 225 min, hold 360
	it('lays out the planned vertices', () => {
		const p = expectedProfile(createSucroseRecipe());
		expect(p.map((x) => [x.tS / 60, x.shelfC, x.pressurePa, x.phase, x.segment])).toEqual([
			[0, 5, null, 'freezing', 'ramp'],
			[10, -5, null, 'freezing', 'hold'],
			[40, -5, null, 'freezing', 'ramp'],
			[120, -45, null, 'freezing', 'hold'],
			[240, -45, 10, 'primary-drying', 'ramp'],
			[290, -20, 10, 'primary-drying', 'hold'],
			[1490, -20, 10, 'secondary-drying', 'ramp'],
			[1715, 25, 10, 'secondary-drying', 'hold'],
			[2075, 25, 10, 'secondary-drying', 'end']
		]);
	});

	it('plans phase durations and steps', () => {
		const r = createAnnealedRecipe();
		expect(planPhaseDurations(r)).toEqual({
			freezing: 240 * 60,
			annealing: (50 + 180 + 50 + 60) * 60,
			'primary-drying': 1250 * 60,
			'secondary-drying': 585 * 60
		});
		expect(planSteps(r).map((s) => [s.phase, s.fromC, s.toC, s.startS / 60])).toEqual([
			['freezing', 5, -5, 0],
			['freezing', -5, -45, 40],
			['annealing', -45, -20, 240],
			['annealing', -20, -45, 470],
			['primary-drying', -45, -20, 580],
			['secondary-drying', -20, 25, 1830]
		]);
		expect(listRecipePhases(createSucroseRecipe()).map((x) => x.name)).toEqual(['freezing', 'primary-drying', 'secondary-drying']);
	});

	it('evaluates the trajectory between vertices', () => {
		const p = expectedProfile(createSucroseRecipe());
		expect(evaluateProfile(p, 5 * 60)).toMatchObject({ shelfC: 0, pressurePa: null, phase: 'freezing' });
		expect(evaluateProfile(p, 265 * 60)).toMatchObject({ shelfC: -32.5, pressurePa: 10, phase: 'primary-drying' });
		expect(evaluateProfile(p, -10)).toMatchObject({ shelfC: 5 });
		expect(evaluateProfile(p, 1e9)).toMatchObject({ shelfC: 25, phase: 'secondary-drying' });
	});
});
