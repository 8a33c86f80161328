/**
 * End-to-end checks of analyseCycle on synthetic logs with known truth (synthetic.ts): the log
 * is generated from a recipe, with injected excursions, a logistic comparative-pressure fall and
 * seeded noise, and the analysis must recover what was injected. Tolerances are stated per test:
 * times within one sample interval where the injected event is a step, endpoint within a
 * fraction of the logistic time constant τ (see endpoint.ts for the measured accuracy).
 */
import { describe, expect, it } from 'vitest';
import { analyseCycle, analyseCycleDetail } from '$lib/domain/lyo/analysis';
import type { CycleSeries } from '$lib/domain/lyo/series';
import { createAnnealedRecipe, createSucroseRecipe } from './fixtures';
import { buildSyntheticCycle } from './synthetic';

const TAU = 2400;
const endpoint = { midpointS: 72000, tauS: TAU };
const near = (actual: number | undefined | null, expected: number, tol: number) => {
	expect(actual).not.toBeNull();
	expect(actual).toBeDefined();
	expect(Math.abs((actual as number) - expected)).toBeLessThanOrEqual(tol);
};

describe('analyseCycle on a nominal synthetic cycle (60 s samples)', () => {
	const recipe = createSucroseRecipe();
	const dt = 60;
	const { series, truth } = buildSyntheticCycle({
		recipe,
		sampleS: dt,
		seed: 1,
		endpoint,
		shelfExcursions: [{ startS: 40020, endS: 41820, amount: 5 }],
		pressureExcursions: [{ startS: 50040, endS: 50940, amount: 2 }]
	});
	const a = analyseCycle(series, recipe);

	it('returns exactly the documented shape', () => {
		expect(Object.keys(a).sort()).toEqual(['durationS', 'endpoint', 'excursions', 'phases', 'product', 'samples', 'warnings']);
		expect(a.samples).toBe(series.t.length);
		expect(a.durationS).toBe(series.t[series.t.length - 1]);
	});

	it('finds the phases where the generator put them (within one sample)', () => {
		expect(a.phases.map((p) => p.name)).toEqual(['freezing', 'primary-drying', 'secondary-drying']);
		expect(a.phases[0].startS).toBe(0);
		near(a.phases[0].endS, truth.pullDownS, dt);
		near(a.phases[1].startS, truth.pullDownS, dt);
		near(a.phases[2].startS, truth.secondaryStartS, dt);
		near(a.phases[2].endS, truth.backfillS as number, dt);
	});

	it('recovers the injected shelf and pressure excursions (start/end within one sample)', () => {
		expect(a.excursions.map((e) => [e.channel, e.kind])).toEqual([
			['shelf-1', 'above'],
			['cm', 'above']
		]);
		const [shelf, cm] = a.excursions;
		near(shelf.startS, 40020, dt);
		near(shelf.endS, 41820, dt);
		near(shelf.durationS, 1800, 2 * dt);
		// −20 °C hold + 5 °C offset; noise σ = 0.15 °C
		expect(shelf.peak).toBeGreaterThan(-15);
		expect(shelf.peak).toBeLessThan(-14);
		near(cm.startS, 50040, dt);
		near(cm.endS, 50940, dt);
		// 10 Pa × 2; noise 1 %
		expect(cm.peak).toBeGreaterThan(20);
		expect(cm.peak).toBeLessThan(21);
	});

	it('recovers the comparative-pressure endpoint (midpoint ± 0.15 τ, onset/offset ± 0.2 τ)', () => {
		near(a.endpoint?.midpointS, 72000, 0.15 * TAU);
		near(a.endpoint?.onsetS, (truth.endpoint?.onsetS as number), 0.2 * TAU);
		near(a.endpoint?.offsetS, (truth.endpoint?.offsetS as number), 0.2 * TAU);
	});

	it('reports the product maximum and margin during primary drying', () => {
		// probe held at −36 °C while ice lasts, noise σ = 0.2 °C; critical −32 °C (fixtures.ts)
		expect(a.product.maxC).toBeGreaterThan(-36);
		expect(a.product.maxC).toBeLessThan(-35);
		expect(a.product.minMarginC).toBeCloseTo(-32 - (a.product.maxC as number), 12);
		expect(a.product.timeAboveCriticalS).toBe(0);
	});

	it('raises no warning for a run that followed its recipe', () => {
		expect(a.warnings).toEqual([]);
	});

	it('matches the recipe step by step (detail)', () => {
		const d = analyseCycleDetail(series, recipe);
		expect(d.steps.every((s) => s.found)).toBe(true);
		const rates = d.steps.map((s) => s.rampRateCPerMin);
		// planned 1, 0.5, 0.5, 0.2 °C/min; the first ramp (10 min, from the log start) is rounded
		// by the 120 s smoothing at the log edge, the others are measured within 2 %
		expect(Math.abs((rates[1] as number) / 0.5 - 1)).toBeLessThan(0.02);
		expect(Math.abs((rates[2] as number) / 0.5 - 1)).toBeLessThan(0.02);
		expect(Math.abs((rates[3] as number) / 0.2 - 1)).toBeLessThan(0.02);
		expect(d.phaseComparison.map((p) => p.plannedS)).toEqual([14400, 75000, 35100]);
	});
});

describe('analyseCycle: short excursions, NaN gaps (10 s samples)', () => {
	const recipe = createSucroseRecipe();
	const { series } = buildSyntheticCycle({
		recipe,
		sampleS: 10,
		seed: 4,
		endpoint,
		shelfExcursions: [
			{ startS: 30000, endS: 30030, amount: 6 }, // 30 s: below the 60 s minimum, not reported
			{ startS: 35000, endS: 35120, amount: 6 }, // 120 s: reported
			{ startS: 40000, endS: 41800, amount: -6 } // 30 min below, with a 100 s probe dropout inside
		],
		gaps: [{ role: 'shelf', startS: 40500, endS: 40600 }]
	});
	const a = analyseCycle(series, recipe);

	it('drops the 30 s excursion, keeps the 120 s one and bridges the dropout', () => {
		expect(a.excursions.map((e) => e.kind)).toEqual(['above', 'below']);
		near(a.excursions[0].startS, 35000, 10);
		near(a.excursions[0].endS, 35120, 10);
		near(a.excursions[1].startS, 40000, 10);
		near(a.excursions[1].endS, 41800, 10);
		expect(a.warnings).toEqual([]);
	});

	it('reports the 30 s excursion when the minimum is lowered', () => {
		const b = analyseCycle(series, recipe, { minExcursionS: 10 });
		near(b.excursions[0].startS, 30000, 10);
		near(b.excursions[0].durationS, 30, 20);
	});
});

describe('analyseCycle: differences from the plan become warnings', () => {
	it('names longer phases, a longer hold and a faster ramp', () => {
		const plan = createSucroseRecipe();
		const actual = createSucroseRecipe();
		actual.primaryDrying.steps[0].holdMin = 1380; // +180 min
		actual.secondaryDrying.steps[0].rampRateCPerMin = 0.3; // planned 0.2
		const { series } = buildSyntheticCycle({ recipe: actual, sampleS: 60, seed: 3, endpoint });
		const a = analyseCycle(series, plan);
		expect(a.warnings).toHaveLength(4);
		expect(a.warnings[0]).toMatch(/^primary-drying: lasted 14(2|3)\d\.\d min, planned 1250\.0 min$/);
		// secondary: 45 °C at 0.3 instead of 0.2 °C/min = 150 instead of 225 min
		expect(a.warnings[1]).toMatch(/^secondary-drying: lasted 51\d\.\d min, planned 585\.0 min$/);
		expect(a.warnings[2]).toMatch(/^primary-drying step 1: hold 13[78]\d\.\d min, planned 1200\.0 min$/);
		expect(a.warnings[3]).toBe('secondary-drying step 1: ramp 0.30 °C/min, planned 0.20 °C/min');
		expect(a.excursions).toEqual([]);
	});

	it('reports the product above its critical temperature', () => {
		const recipe = createSucroseRecipe();
		// +6 °C on the probe for 30 min: −36 → −30 °C, above the −32 °C collapse temperature
		const { series } = buildSyntheticCycle({ recipe, sampleS: 60, seed: 5, endpoint, productExcursions: [{ startS: 40000, endS: 41800, amount: 6 }] });
		const a = analyseCycle(series, recipe);
		near(a.product.timeAboveCriticalS, 1800, 60);
		expect(a.product.maxC).toBeGreaterThan(-30.5);
		expect(a.product.minMarginC).toBeLessThan(-1.5);
		expect(a.warnings).toEqual([
			expect.stringMatching(/^product: margin to the collapse temperature -2\.\d °C, required 2\.0 °C$/),
			expect.stringMatching(/^product: above the critical temperature for 29\.\d min during primary drying$/)
		]);
	});

	it('warns when the comparative-pressure offset comes after secondary drying began', () => {
		const recipe = createSucroseRecipe();
		// midpoint 88 000 s → offset 92 800 s, after the planned secondary start at 89 400 s
		const { series } = buildSyntheticCycle({ recipe, sampleS: 60, seed: 6, endpoint: { midpointS: 88000, tauS: TAU } });
		const a = analyseCycle(series, recipe);
		near(a.endpoint?.midpointS, 88000, 0.15 * TAU);
		expect(a.warnings).toEqual(['comparative pressure: the offset comes after secondary drying started; ice may have remained when the shelf was warmed']);
	});

	it('gives no endpoint when the ratio never falls', () => {
		const recipe = createSucroseRecipe();
		const { series } = buildSyntheticCycle({ recipe, sampleS: 60, seed: 6 });
		const a = analyseCycle(series, recipe);
		expect(a.endpoint).toBeNull();
		expect(a.warnings).toEqual(['comparative pressure: the ratio falls by only 0.00; no clear endpoint']);
	});

	it('flags an annealing log read against a plan without annealing', () => {
		const { series } = buildSyntheticCycle({ recipe: createAnnealedRecipe(), sampleS: 60, seed: 9, endpoint: { midpointS: 92000, tauS: 3000 } });
		const a = analyseCycle(series, createSucroseRecipe());
		expect(a.phases.map((p) => p.name)).toEqual(['freezing', 'primary-drying', 'secondary-drying']);
		// the anneal at −20 °C is outside the −45 ± 3 °C freezing hold
		expect(a.excursions.map((e) => [e.channel, e.kind])).toEqual([['shelf-1', 'above']]);
		expect(a.excursions[0].peak).toBeGreaterThan(-21);
		expect(a.warnings).toEqual([expect.stringMatching(/^freezing: lasted 580\.0 min/), expect.stringMatching(/^freezing step 2: hold 460\.0 min/)]);
	});
});

describe('analyseCycle: annealing, lag, missing data', () => {
	it('finds annealing with and without the recipe (30 s samples)', () => {
		const recipe = createAnnealedRecipe();
		const { series, truth } = buildSyntheticCycle({ recipe, sampleS: 30, seed: 9, endpoint: { midpointS: 92000, tauS: 3000 } });
		for (const r of [recipe, null]) {
			const a = analyseCycle(series, r);
			expect(a.phases.map((p) => p.name)).toEqual(['freezing', 'annealing', 'primary-drying', 'secondary-drying']);
			near(a.phases[1].startS, truth.annealingStartS as number, 30);
			near(a.phases[2].startS, truth.pullDownS, 30);
			near(a.phases[3].startS, truth.secondaryStartS, 60);
			near(a.endpoint?.midpointS, 92000, 0.15 * 3000);
		}
		expect(analyseCycle(series, recipe).warnings).toEqual([]);
		expect(analyseCycle(series, null).warnings).toEqual(['no recipe: excursions, phase durations and the product margin were not checked']);
		expect(analyseCycle(series, null).excursions).toEqual([]);
		expect(analyseCycle(series, null).product.minMarginC).toBeNull();
	});

	it('follows a lagging shelf without false excursions', () => {
		// first-order lag of 300 s: the response to a ramp is the ramp delayed by 300 s
		const recipe = createSucroseRecipe();
		const { series, truth } = buildSyntheticCycle({ recipe, sampleS: 60, seed: 7, shelfLagS: 300, endpoint });
		const a = analyseCycle(series, recipe);
		near(a.phases[2].startS, truth.secondaryStartS + 300, 2 * 60);
		expect(a.excursions).toEqual([]);
		// the 10-min freezing ramp cannot be followed at a 5-min lag: rightly reported as slow
		expect(a.warnings).toEqual([expect.stringMatching(/^freezing step 1: ramp 0\.\d\d °C\/min, planned 1\.00 °C\/min$/)]);
	});

	it('reports a log that ends during primary drying as cut short', () => {
		const recipe = createSucroseRecipe();
		const { series } = buildSyntheticCycle({ recipe, sampleS: 60, seed: 8, endpoint });
		const n = 1000; // 999 min
		const cut: CycleSeries = { t: series.t.slice(0, n), channels: series.channels.map((c) => ({ ...c, values: c.values.slice(0, n) })) };
		const a = analyseCycle(cut, recipe);
		expect(a.phases.map((p) => p.name)).toEqual(['freezing', 'primary-drying']);
		expect(a.endpoint).toBeNull();
		expect(a.warnings).toEqual([
			'secondary-drying: in the recipe but not found in the log',
			'primary-drying: the log ends after 759.0 min of 1250.0 min planned',
			'comparative pressure: the ratio falls by only 0.00; no clear endpoint'
		]);
	});

	it('copes without Pirani and product probes (manometer off scale at atmosphere)', () => {
		const recipe = createSucroseRecipe();
		const { series, truth } = buildSyntheticCycle({ recipe, sampleS: 60, seed: 8, endpoint });
		const s: CycleSeries = { t: series.t, channels: series.channels.filter((c) => c.role !== 'pirani' && c.role !== 'product') };
		const a = analyseCycle(s, recipe);
		// the manometer reads 0 above its 133 Pa full scale, so it sees the pull-down only when
		// it comes into range (≈ 7 min later at the generator's 60 s pump time constant)
		expect(a.phases[1].startS).toBeGreaterThanOrEqual(truth.pullDownS);
		expect(a.phases[1].startS).toBeLessThanOrEqual(truth.pullDownS + 900);
		expect(a.endpoint).toBeNull();
		expect(a.product).toEqual({ maxC: null, minMarginC: null, timeAboveCriticalS: 0 });
		expect(a.warnings).toEqual([
			'comparative pressure needs both a Pirani and a capacitance manometer channel: no endpoint',
			'no product temperature channel: product margin not assessed'
		]);
	});

	it('reports a log that starts under vacuum', () => {
		const recipe = createSucroseRecipe();
		const { series } = buildSyntheticCycle({ recipe, sampleS: 60, seed: 10, endpoint });
		const from = 20000 / 60; // start the log 20 000 s in, during the primary-drying hold
		const late: CycleSeries = {
			t: series.t.slice(from).map((x) => x - 20000),
			channels: series.channels.map((c) => ({ ...c, values: c.values.slice(from) }))
		};
		const a = analyseCycle(late, recipe);
		expect(a.phases.map((p) => p.name)).toEqual(['primary-drying', 'secondary-drying']);
		near(a.phases[1].startS, 89400 - 20000, 60);
		near(a.endpoint?.midpointS, 72000 - 20000, 0.15 * TAU);
		expect(a.warnings).toEqual([
			'the log starts under vacuum: freezing is not in the log',
			'freezing: in the recipe but not found in the log'
		]);
	});

	it('warns when the product was not frozen below the critical temperature at the pull-down', () => {
		// Tang & Pikal (2004): freeze below the critical temperature before evacuating.
		// +20 °C on the probe in the 10 min before the pull-down at 14 400 s: −45 → −25 °C
		const recipe = createSucroseRecipe();
		const { series } = buildSyntheticCycle({
			recipe,
			sampleS: 60,
			seed: 11,
			endpoint,
			productExcursions: [{ startS: 13860, endS: 14400, amount: 20 }]
		});
		const a = analyseCycle(series, recipe);
		expect(a.warnings).toEqual([
			expect.stringMatching(/^product: -2\d\.\d °C at the pull-down, not below the critical temperature less the margin$/)
		]);
	});

	it('refuses a structurally invalid series', () => {
		const bad: CycleSeries = { t: Float64Array.from([0, 1]), channels: [{ id: 'x', role: 'shelf', unit: 'degC', values: Float64Array.from([1]) }] };
		expect(() => analyseCycle(bad, null)).toThrow(TypeError);
	});

	it('handles an empty log', () => {
		const a = analyseCycle({ t: new Float64Array(0), channels: [] }, null);
		expect(a.samples).toBe(0);
		expect(a.phases).toEqual([]);
		expect(a.warnings).toContain('the log is empty');
	});
});
