/**
 * In-process statistics of repeated measurements (fill weights, contents) and yields.
 * Sources: USP <905> Uniformity of Dosage Units (acceptance value); 21 CFR 210.3 (percentage of
 * theoretical yield); 21 CFR 211.103 and 211.186(b)(7) (yields at each phase, limits in the MBR).
 */
import { checkValue, roundHalfAwayFromZero, type Bounds, type LimitStatus } from './limits';

export interface Summary {
	n: number;
	mean: number;
	/** Sample standard deviation (n − 1); undefined for one reading. */
	sd: number | undefined;
	min: number;
	max: number;
}

function requireReadings(values: readonly number[]): void {
	if (values.length === 0) throw new RangeError('no readings');
	if (values.some((v) => !Number.isFinite(v))) throw new RangeError('a reading is not a finite number');
}

/** Neumaier-compensated sum: no drift over many readings. */
function sum(values: readonly number[]): number {
	let total = 0;
	let c = 0;
	for (const v of values) {
		const t = total + v;
		c += Math.abs(total) >= Math.abs(v) ? total - t + v : v - t + total;
		total = t;
	}
	return total + c;
}

export function mean(values: readonly number[]): number {
	requireReadings(values);
	return sum(values) / values.length;
}

/** Sample standard deviation, divisor n − 1 (USP <905>: "s" is the sample SD); two-pass. */
export function sampleSd(values: readonly number[]): number {
	requireReadings(values);
	if (values.length < 2) throw new RangeError('a sample SD needs at least two readings');
	const m = mean(values);
	return Math.sqrt(sum(values.map((v) => (v - m) ** 2)) / (values.length - 1));
}

export function summarize(values: readonly number[]): Summary {
	requireReadings(values);
	return {
		n: values.length,
		mean: mean(values),
		sd: values.length > 1 ? sampleSd(values) : undefined,
		min: Math.min(...values),
		max: Math.max(...values)
	};
}

/** USP <905> acceptability constant k: 2.4 for n = 10, 2.0 for n = 30 (no other n is defined). */
export function acceptabilityConstant(n: number): number {
	if (n === 10) return 2.4;
	if (n === 30) return 2.0;
	throw new RangeError('USP <905> defines k for 10 or 30 units only');
}

/** USP <905> L1 (maximum allowed acceptance value) and L2 (individual range, stage 2), in % LC. */
export const USP905_L1 = 15.0;
export const USP905_L2 = 25.0;

/**
 * USP <905> reference value M for a target content T ≤ 101.5 % LC: the mean clamped to
 * 98.5–101.5 % of label claim.
 */
export function referenceValue(meanPercent: number): number {
	return Math.min(101.5, Math.max(98.5, meanPercent));
}

/** USP <905> acceptance value AV = |M − X̄| + k·s (contents in % of label claim). */
export function acceptanceValue(meanPercent: number, sd: number, n: number): number {
	return Math.abs(referenceValue(meanPercent) - meanPercent) + acceptabilityConstant(n) * sd;
}

export interface UniformityResult {
	n: number;
	mean: number;
	sd: number;
	k: number;
	m: number;
	av: number;
	/** AV rounded to one decimal, the places of L1 = 15.0 (USP General Notices 7.20). */
	reportedAv: number;
	/** Stage 1 (10 units) passes with AV ≤ L1; else 20 more units are tested (stage 2). */
	result: 'pass' | 'test-20-more' | 'fail';
	/** Stage 2: units outside (1 ± 0.01·L2)·M, by index. */
	outsideL2: number[];
}

/**
 * Judges content uniformity by USP <905> from individual contents in % of label claim, for a
 * target T ≤ 101.5 %: 10 units (stage 1) or 30 units (stage 2, where also no unit may lie
 * outside (1 ± 0.01·L2)·M).
 */
export function assessUniformity(contentsPercent: readonly number[]): UniformityResult {
	const n = contentsPercent.length;
	const k = acceptabilityConstant(n);
	const x = mean(contentsPercent);
	const s = sampleSd(contentsPercent);
	const m = referenceValue(x);
	const av = acceptanceValue(x, s, n);
	const reportedAv = roundHalfAwayFromZero(av, 1);
	const lo = (1 - 0.01 * USP905_L2) * m;
	const hi = (1 + 0.01 * USP905_L2) * m;
	const outsideL2 = n === 30 ? contentsPercent.flatMap((c, i) => (c < lo || c > hi ? [i] : [])) : [];
	let result: UniformityResult['result'];
	if (n === 10) result = reportedAv <= USP905_L1 ? 'pass' : 'test-20-more';
	else result = reportedAv <= USP905_L1 && outsideL2.length === 0 ? 'pass' : 'fail';
	return { n, mean: x, sd: s, k, m, av, reportedAv, result, outsideL2 };
}

/** Readings as % of a reference (label claim, or target fill weight for an in-process estimate). */
export function toPercentOf(readings: readonly number[], reference: number): number[] {
	if (!(reference > 0)) throw new RangeError('the reference must be positive');
	return readings.map((r) => (r / reference) * 100);
}

/** Percentage of theoretical yield: actual ÷ theoretical × 100, same phase, same unit (21 CFR 210.3). */
export function percentOfTheoretical(actual: number, theoretical: number): number {
	if (!(theoretical > 0)) throw new RangeError('the theoretical yield must be positive');
	if (!(actual >= 0)) throw new RangeError('the actual yield cannot be negative');
	return (actual / theoretical) * 100;
}

/** What a repeated-measurement field says about its readings (structurally the schema's field). */
export interface RepeatedSpec {
	count: number;
	decimals: number;
	maxSd?: number;
	acceptanceValue?: { labelClaim: number };
}

export interface RepeatedAssessment {
	summary: Summary;
	/** Each reading as entered, against the individual limits (null: no limits). */
	readings: { value: number; status: LimitStatus | null }[];
	/** The mean reported at the field's decimals, against the mean limits. */
	mean: { reported: number; status: LimitStatus | null };
	/** The SD reported at one more decimal than the readings (common practice), against maxSd. */
	sd: { reported: number; status: 'within' | 'above' | null } | null;
	/** USP <905> when the field asks for it and all `count` readings (10 or 30) are in. */
	uniformity: UniformityResult | null;
	complete: boolean;
	/** Whether anything is out of limits (an incomplete set is judged on what is there). */
	outOfLimits: boolean;
}

/** Judges the readings of a repeated-measurement field against its resolved bounds. */
export function assessReadings(
	spec: RepeatedSpec,
	values: readonly number[],
	bounds: { limits?: Bounds; meanLimits?: Bounds }
): RepeatedAssessment {
	const summary = summarize(values);
	const readings = values.map((value) => ({ value, status: bounds.limits ? checkValue(value, bounds.limits) : null }));
	const meanReported = roundHalfAwayFromZero(summary.mean, spec.decimals);
	const mean = { reported: meanReported, status: bounds.meanLimits ? checkValue(meanReported, bounds.meanLimits) : null };
	let sd: RepeatedAssessment['sd'] = null;
	if (summary.sd !== undefined) {
		const reported = roundHalfAwayFromZero(summary.sd, Math.min(15, spec.decimals + 1));
		sd = { reported, status: spec.maxSd === undefined ? null : reported > spec.maxSd ? 'above' : 'within' };
	}
	const complete = values.length === spec.count;
	const uniformity =
		spec.acceptanceValue && complete && (spec.count === 10 || spec.count === 30)
			? assessUniformity(toPercentOf(values, spec.acceptanceValue.labelClaim))
			: null;
	const outOfLimits =
		readings.some((r) => r.status !== null && r.status !== 'within') ||
		(mean.status !== null && mean.status !== 'within') ||
		sd?.status === 'above' ||
		(uniformity !== null && uniformity.result !== 'pass');
	return { summary, readings, mean, sd, uniformity, complete, outOfLimits };
}
