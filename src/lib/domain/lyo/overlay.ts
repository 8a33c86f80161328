/**
 * What the cycle chart draws over the logged traces: phases, the recipe's setpoints and
 * acceptable ranges as the analysis aligned them to this run, excursions and the endpoint.
 * The ranges are the very bands the excursion check used (excursions.ts), run-length encoded
 * into rectangles, so the chart shows exactly what was checked.
 */
import { DEFAULT_ANALYSIS_OPTIONS, type CycleAnalysisDetail } from './analysis';
import { buildPressureBands, buildShelfBands, type Bands } from './excursions';
import { findChannels, type CycleSeries } from './series';

export interface BandRect {
	fromS: number;
	toS: number;
	lo: number;
	hi: number;
}

export interface SetpointSegment {
	fromS: number;
	toS: number;
	fromValue: number;
	toValue: number;
}

export interface ChartOverlay {
	phases: CycleAnalysisDetail['phases'];
	excursions: CycleAnalysisDetail['excursions'];
	endpoint: CycleAnalysisDetail['endpoint'];
	/** shelf °C */
	shelfBands: BandRect[];
	/** chamber pressure Pa */
	pressureBands: BandRect[];
	/** the recipe's shelf setpoint aligned to the run: planned ramp from the actual ramp start, then the hold */
	shelfSetpoint: SetpointSegment[];
	pressureSetpoint: SetpointSegment[];
}

/** Run-length encodes per-sample bands into rectangles (NaN sides: not checked there). */
export function encodeBands(t: Float64Array, bands: Bands): BandRect[] {
	const out: BandRect[] = [];
	let start = -1;
	for (let i = 0; i <= t.length; i++) {
		const same =
			i < t.length &&
			start >= 0 &&
			Object.is(bands.lower[i], bands.lower[start]) &&
			Object.is(bands.upper[i], bands.upper[start]);
		if (same) continue;
		if (start >= 0 && !(Number.isNaN(bands.lower[start]) && Number.isNaN(bands.upper[start]))) {
			out.push({ fromS: t[start], toS: i < t.length ? t[i] : t[t.length - 1], lo: bands.lower[start], hi: bands.upper[start] });
		}
		start = i;
	}
	return out;
}

export function buildChartOverlay(series: CycleSeries, detail: CycleAnalysisDetail): ChartOverlay {
	const { t } = series;
	const shelfBands = detail.steps.length ? encodeBands(t, buildShelfBands(t, detail.steps, detail.phases)) : [];
	const manometer = findChannels(series, 'manometer')[0];
	const pressureBands =
		detail.steps.length && manometer
			? encodeBands(t, buildPressureBands(t, manometer.values, detail.steps, detail.phases, DEFAULT_ANALYSIS_OPTIONS.pressureSettleS))
			: [];
	const shelfSetpoint: SetpointSegment[] = [];
	const pressureSetpoint: SetpointSegment[] = [];
	for (const s of detail.steps) {
		if (!s.found || s.rampStartS === null || s.holdEndS === null) continue;
		const rampEnd = Math.min(s.holdEndS, s.rampStartS + (Math.abs(s.toC - s.fromC) / s.spec.rampRateCPerMin) * 60);
		if (rampEnd > s.rampStartS) shelfSetpoint.push({ fromS: s.rampStartS, toS: rampEnd, fromValue: s.fromC, toValue: s.toC });
		shelfSetpoint.push({ fromS: rampEnd, toS: s.holdEndS, fromValue: s.toC, toValue: s.toC });
		if (s.spec.chamberPressurePa !== null) {
			pressureSetpoint.push({ fromS: s.rampStartS, toS: s.holdEndS, fromValue: s.spec.chamberPressurePa, toValue: s.spec.chamberPressurePa });
		}
	}
	return { phases: detail.phases, excursions: detail.excursions, endpoint: detail.endpoint, shelfBands, pressureBands, shelfSetpoint, pressureSetpoint };
}
