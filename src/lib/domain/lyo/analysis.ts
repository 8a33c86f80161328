/**
 * Checks an uploaded cycle log against the recipe (design.md, "The whole job", step 4): the
 * phases as they happened, shelf and pressure excursions, product temperature against the
 * critical temperature, and the primary-drying endpoint by comparative pressure. Pure: the
 * same series and recipe always give the same result. Findings that differ from the plan are
 * warnings, never exceptions; only a structurally invalid series throws (assertSeries).
 *
 * All times are seconds from the log start (the series' own axis), temperatures °C,
 * pressures Pa.
 *
 * Without a recipe: phases are found from pressure and shelf behaviour alone, no excursions
 * are checked (there are no limits), product.maxC is reported but minMarginC is null and
 * timeAboveCriticalS is 0, and a warning says so.
 */
import { DEFAULT_ENDPOINT_OPTIONS, detectEndpoint, type Endpoint, type EndpointOptions } from './endpoint';
import { buildPressureBands, buildShelfBands, findExcursions, type Excursion } from './excursions';
import { detectPhases, type PhaseInterval } from './phases';
import { findProductMaximum, summariseProduct, type ProductSummary } from './product';
import type { Recipe } from './recipe';
import {
	assertSeries,
	combineChannels,
	estimateSampleInterval,
	findChannels,
	type CycleSeries
} from './series';
import { smoothMovingAverage } from './signal';
import { alignSteps, compareWithRecipe, type PhaseComparison, type StepAlignment } from './steps';

export interface CycleAnalysis {
	durationS: number;
	samples: number;
	phases: PhaseInterval[];
	excursions: Excursion[];
	endpoint: Endpoint | null;
	product: ProductSummary;
	warnings: string[];
}

export interface AnalysisOptions {
	/** excursions shorter than this are not reported, s (common practice; default 60) */
	minExcursionS: number;
	/** NaN gaps up to this long are bridged (excursions, time above critical), s (default 300) */
	maxGapS: number;
	/** vacuum threshold, Pa; default from the recipe (see phases.ts) */
	vacuumThresholdPa?: number;
	/** how long a state must last to count, s (default 300) */
	sustainS: number;
	/** moving-average window of the shelf trace used to find phases and ramps, s (default 120) */
	shelfSmoothingS: number;
	/** setpoint changes below this have no ramp, °C (default 2) */
	minRampC: number;
	/** recipe-free secondary drying: first warm hold under vacuum, °C (default 0) */
	warmShelfC: number;
	/** recipe-free annealing: rise above a cold hold, °C (default 10) */
	annealRiseC: number;
	/** time allowed after a drying step starts before its pressure range applies, s (default 1800) */
	pressureSettleS: number;
	/** Rimebook defaults for reporting differences from the plan (sites may tighten them) */
	rampTolerancePct: number;
	holdToleranceMin: number;
	holdTolerancePct: number;
	durationToleranceMin: number;
	durationTolerancePct: number;
	/** the comparative-pressure search starts this long after the pull-down, s (default 1800) */
	endpointSettleS: number;
	endpoint: EndpointOptions;
}

export const DEFAULT_ANALYSIS_OPTIONS: AnalysisOptions = {
	minExcursionS: 60,
	maxGapS: 300,
	sustainS: 300,
	shelfSmoothingS: 120,
	minRampC: 2,
	warmShelfC: 0,
	annealRiseC: 10,
	pressureSettleS: 1800,
	rampTolerancePct: 25,
	holdToleranceMin: 10,
	holdTolerancePct: 10,
	durationToleranceMin: 15,
	durationTolerancePct: 10,
	endpointSettleS: 1800,
	endpoint: DEFAULT_ENDPOINT_OPTIONS
};

/** The full result with the intermediate detail a report or chart may show. */
export interface CycleAnalysisDetail extends CycleAnalysis {
	pullDownS: number | null;
	backfillS: number | null;
	steps: StepAlignment[];
	phaseComparison: PhaseComparison[];
}

export function analyseCycle(
	series: CycleSeries,
	recipe: Recipe | null,
	options: Partial<AnalysisOptions> = {}
): CycleAnalysis {
	const d = analyseCycleDetail(series, recipe, options);
	const { durationS, samples, phases, excursions, endpoint, product, warnings } = d;
	return { durationS, samples, phases, excursions, endpoint, product, warnings };
}

export function analyseCycleDetail(
	series: CycleSeries,
	recipe: Recipe | null,
	partial: Partial<AnalysisOptions> = {}
): CycleAnalysisDetail {
	assertSeries(series);
	const o: AnalysisOptions = {
		...DEFAULT_ANALYSIS_OPTIONS,
		...partial,
		endpoint: { ...DEFAULT_ENDPOINT_OPTIONS, ...partial.endpoint }
	};
	const { t } = series;
	const n = t.length;
	const warnings: string[] = [];
	const durationS = n > 0 ? t[n - 1] - t[0] : 0;
	const dt = estimateSampleInterval(t);

	const shelfRaw =
		combineChannels(series, 'shelf', 'mean') ?? combineChannels(series, 'setpoint-shelf', 'mean');
	if (!findChannels(series, 'shelf').length && shelfRaw) {
		warnings.push('no shelf temperature channel: phases found from the logged shelf setpoint');
	}
	const shelf = shelfRaw ? smoothMovingAverage(t, shelfRaw, Math.max(o.shelfSmoothingS, 0)) : null;

	const detection = detectPhases(series, shelf, recipe, o);
	warnings.push(...detection.warnings);
	const { phases, pullDownS, backfillS } = detection;

	// Recipe comparison and excursions.
	let steps: StepAlignment[] = [];
	let phaseComparison: PhaseComparison[] = [];
	const excursions: Excursion[] = [];
	const exOpts = { minDurationS: o.minExcursionS, maxGapS: o.maxGapS };
	if (recipe) {
		const aligned = alignSteps(t, shelf, phases, recipe, o);
		steps = aligned.steps;
		warnings.push(...aligned.warnings);
		const cmp = compareWithRecipe(phases, steps, recipe, backfillS, o);
		phaseComparison = cmp.phases;
		warnings.push(...cmp.warnings);
		const shelfBands = buildShelfBands(t, steps, phases);
		for (const ch of findChannels(series, 'shelf')) {
			excursions.push(...findExcursions(t, ch.values, shelfBands, ch.id, exOpts));
		}
		const manometers = findChannels(series, 'manometer');
		if (manometers.length === 0 && pullDownS !== null) {
			warnings.push('no capacitance manometer channel: chamber pressure not checked');
		}
		for (const ch of manometers) {
			const bands = buildPressureBands(t, ch.values, steps, phases, o.pressureSettleS);
			excursions.push(...findExcursions(t, ch.values, bands, ch.id, exOpts));
		}
		excursions.sort((a, b) => a.startS - b.startS || a.channel.localeCompare(b.channel));
	} else {
		warnings.push('no recipe: excursions, phase durations and the product margin were not checked');
	}

	// Comparative-pressure endpoint.
	let endpoint: Endpoint | null = null;
	const pirani = combineChannels(series, 'pirani', 'mean');
	const manometer = combineChannels(series, 'manometer', 'mean');
	const primary = phases.find((p) => p.name === 'primary-drying');
	const secondary = phases.find((p) => p.name === 'secondary-drying');
	if (pullDownS !== null && primary) {
		if (!pirani || !manometer) {
			warnings.push('comparative pressure needs both a Pirani and a capacitance manometer channel: no endpoint');
		} else {
			const fromS = pullDownS + o.endpointSettleS;
			const toS = backfillS ?? t[n - 1] + dt;
			const res = detectEndpoint(t, pirani, manometer, fromS, toS, o.endpoint);
			endpoint = res.endpoint;
			warnings.push(...res.warnings);
			if (endpoint && secondary && endpoint.offsetS > secondary.startS) {
				warnings.push(
					'comparative pressure: the offset comes after secondary drying started; ice may have remained when the shelf was warmed'
				);
			}
		}
	}

	// Product temperature.
	const productMax = combineChannels(series, 'product', 'max');
	const criticalC = recipe ? recipe.product.criticalTemperatureC : null;
	let product: ProductSummary = { maxC: null, minMarginC: null, timeAboveCriticalS: 0 };
	if (!productMax) {
		warnings.push('no product temperature channel: product margin not assessed');
	} else if (primary) {
		const onsetInside = endpoint && endpoint.onsetS > primary.startS && endpoint.onsetS < primary.endS;
		const windowEnd = onsetInside ? (endpoint as Endpoint).onsetS : primary.endS;
		product = summariseProduct(t, productMax, primary.startS, windowEnd, criticalC, o.maxGapS);
		if (product.maxC === null) warnings.push('no product temperature reading during primary drying');
		if (recipe && product.minMarginC !== null && product.minMarginC < recipe.product.marginC) {
			const { criticalKind, marginC } = recipe.product;
			warnings.push(
				`product: margin to the ${criticalKind} temperature ${product.minMarginC.toFixed(1)} °C, required ${marginC.toFixed(1)} °C`
			);
		}
		if (product.timeAboveCriticalS > 0) {
			const min = (product.timeAboveCriticalS / 60).toFixed(1);
			warnings.push(`product: above the critical temperature for ${min} min during primary drying`);
		}
		// Tang & Pikal (2004): freeze below the critical temperature before evacuating.
		if (recipe && pullDownS !== null) {
			const atPull = findProductMaximum(t, productMax, pullDownS - 600, pullDownS);
			if (atPull > recipe.product.criticalTemperatureC - recipe.product.marginC) {
				warnings.push(
					`product: ${atPull.toFixed(1)} °C at the pull-down, not below the critical temperature less the margin`
				);
			}
		}
	}
	return {
		durationS,
		samples: n,
		phases,
		excursions,
		endpoint,
		product,
		warnings,
		pullDownS,
		backfillS,
		steps,
		phaseComparison
	};
}
