import { downsampleSeries, searchTimeIndex, searchTimeIndexAfter, type CycleSeries } from '$lib/domain/lyo/series';
import { downsampleOverview, overviewBucketsFor, overviewPoints, overviewSliceBounds } from '$lib/domain/lyo/overview';
import type { Executor } from '../db/client';
import { cachedSeries, loadOverview, loadSeriesCached, loadSeriesSlice } from './series-store';

export interface ChartRequest {
	channels: string[] | null;
	from: number | null;
	to: number | null;
	maxPoints: number;
}

export interface ChartData {
	from: number;
	to: number;
	/** samples of the run in [from, to] before down-sampling */
	samples: number;
	t: number[];
	channels: { id: string; role: string; unit: string | null; values: (number | null)[] }[];
}

/** Default and largest number of points per channel a chart request gets. */
export const DEFAULT_MAX_POINTS = 2000;
export const MAX_POINTS = 20_000;

function toJsonNumbers(values: Float64Array): (number | null)[] {
	const out: (number | null)[] = new Array(values.length);
	for (let i = 0; i < values.length; i++) out[i] = Number.isNaN(values[i]) ? null : values[i];
	return out;
}

/**
 * The chart's data for a window of a run: min/max per bucket (domain/lyo/series.ts), so every
 * spike survives at any zoom while the response stays about maxPoints rows. NaN → null (a gap).
 */
export function buildChartData(series: CycleSeries, request: ChartRequest): ChartData {
	const n = series.t.length;
	const first = n ? series.t[0] : 0;
	const last = n ? series.t[n - 1] : 0;
	const from = Math.max(first, request.from ?? first);
	const to = Math.min(last, request.to ?? last);
	const wanted = request.channels ? series.channels.filter((c) => request.channels!.includes(c.id)) : series.channels;
	const picked = { t: series.t, channels: wanted };
	const down = downsampleSeries(picked, from, to, request.maxPoints);
	const samples = Math.max(0, searchTimeIndexAfter(series.t, to) - searchTimeIndex(series.t, from));
	return {
		from,
		to,
		samples,
		t: Array.from(down.t),
		channels: wanted.map((c, k) => ({ id: c.id, role: c.role, unit: c.unit, values: toJsonNumbers(down.values[k]) }))
	};
}

export class ChartRequestError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'ChartRequestError';
	}
}

/**
 * GET /api/runs/<id>/series without reading every sample when it need not: a run already in
 * the series cache is cut from memory; otherwise the whole run comes from the stored overview
 * (exactly the min/max of the raw samples, at the largest power-of-two bucket count that fits
 * maxPoints), and a zoom window from the slice of raw samples it covers. Runs stored before
 * overviews existed are loaded whole. Null: no such run. Unknown channels: ChartRequestError.
 */
export async function serveChartData(db: Executor, runId: string, request: ChartRequest): Promise<ChartData | null> {
	const cached = cachedSeries(runId);
	if (cached) {
		checkChannels(cached.channels, request);
		// The whole run at the overview's resolution, so a response is the same whether cached or not.
		const n = cached.t.length;
		const whole = n === 0 || ((request.from ?? -Infinity) <= cached.t[0] && (request.to ?? Infinity) >= cached.t[n - 1]);
		return buildChartData(cached, whole ? { ...request, maxPoints: overviewPoints(overviewBucketsFor(n), request.maxPoints) } : request);
	}
	const overview = await loadOverview(db, runId);
	if (!overview) {
		const series = await loadSeriesCached(db, runId);
		if (!series) return null;
		checkChannels(series.channels, request);
		return buildChartData(series, request);
	}
	checkChannels(overview.channels, request);
	const n = overview.t.length;
	const first = n ? overview.t[0] : 0;
	const last = n ? overview.t[n - 1] : 0;
	const from = Math.max(first, request.from ?? first);
	const to = Math.min(last, request.to ?? last);
	const picked = overview.channels.map((c, k) => ({ c, k })).filter(({ c }) => !request.channels || request.channels.includes(c.id));
	if (from <= first && to >= last) {
		const down = downsampleOverview(overview, request.maxPoints, picked.map((p) => p.k));
		return {
			from,
			to,
			samples: overview.samples,
			t: Array.from(down.t),
			channels: picked.map(({ c }, j) => ({ id: c.id, role: c.role, unit: c.unit, values: toJsonNumbers(down.values[j]) }))
		};
	}
	const { lo, hi } = overviewSliceBounds(overview, from, to);
	const slice = await loadSeriesSlice(db, runId, lo, hi, picked.map((p) => p.c.id));
	if (!slice) return null;
	return buildChartData(slice, { ...request, from, to });
}

function checkChannels<T extends { id: string }>(channels: readonly T[], request: ChartRequest): readonly T[] {
	const unknown = request.channels?.filter((w) => !channels.some((c) => c.id === w)) ?? [];
	if (unknown.length) throw new ChartRequestError(`No such channel: ${unknown.join(', ')}.`);
	return channels;
}
