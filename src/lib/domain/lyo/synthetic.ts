/**
 * Synthetic cycle logs for tests and benchmarks: invented data with known truth.
 *
 * The shelf follows the recipe's planned profile exactly (optionally through a first-order lag),
 * the chamber pressure follows its setpoint through a first-order lag (pull-down from
 * atmospheric pressure, backfill with nitrogen at the end), the Pirani reads the pressure times
 * a ratio that rises from 1 to `upper` as water vapour replaces nitrogen after the pull-down and
 * falls back along a logistic curve 1 + (upper − 1)/(1 + exp((t − midpoint)/τ)) when the ice is
 * gone (the shape described by Patel, Doen & Pikal 2010). For that curve the tangent at the
 * midpoint (slope −(upper − 1)/(4τ)) meets the upper plateau at midpoint − 2τ and the lower at
 * midpoint + 2τ: the analytic onset and offset the endpoint detector must recover.
 * Gauge quirks of real logs (lyophilization.md, "Real cycle logs") are reproduced: the
 * manometer reads 0 above its full scale (133.3 Pa) and the Pirani saturates at 1000 mbar.
 * Noise is Gaussian from a seeded PRNG, so every run is identical.
 */
import { expectedProfile, evaluateProfile, type Recipe } from './recipe';
import type { ChannelRole, CycleSeries, SeriesChannel } from './series';

/** mulberry32 (public-domain 32-bit PRNG by Tommy Ettinger), uniform in [0, 1). */
export function createPrng(seed: number): () => number {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let x = a;
		x = Math.imul(x ^ (x >>> 15), x | 1);
		x ^= x + Math.imul(x ^ (x >>> 7), x | 61);
		return ((x ^ (x >>> 14)) >>> 0) / 4294967296;
	};
}

/** Standard normal deviates by the Box–Muller transform. */
export function createGaussian(seed: number): () => number {
	const u = createPrng(seed);
	return () => {
		const r = Math.sqrt(-2 * Math.log(1 - u()));
		return r * Math.cos(2 * Math.PI * u());
	};
}

export interface InjectedOffset {
	startS: number;
	endS: number;
	/** added to the reading (°C) or, for pressure, multiplies it */
	amount: number;
}

export interface SyntheticOptions {
	recipe: Recipe;
	sampleS: number;
	seed: number;
	noise?: { shelfC?: number; productC?: number; pressureRel?: number };
	/** the comparative-pressure fall; midpointS from the log start */
	endpoint?: { midpointS: number; tauS: number; upper?: number; lower?: number };
	/** product temperature while its ice lasts, °C (default −36) */
	sublimationC?: number;
	shelfLagS?: number;
	pressureTauS?: number;
	shelfExcursions?: InjectedOffset[];
	/** factor applied to both gauges (the chamber pressure really changes) */
	pressureExcursions?: InjectedOffset[];
	productExcursions?: InjectedOffset[];
	/** NaN (no reading) in every channel of a role */
	gaps?: { role: ChannelRole; startS: number; endS: number }[];
	/** log time after the profile end, with the chamber backfilled (default 1200 s; 0 = none) */
	tailS?: number;
	/** extra channels for the benchmark: more shelf and product probes, condenser, other */
	wide?: boolean;
	/**
	 * A pressure-rise (leak) test: the chamber isolated for durationS from startS, both gauges
	 * rising linearly by slopePaPerS (the leak rate is V · slope, lyophilization.md).
	 */
	pressureRise?: { startS: number; durationS: number; slopePaPerS: number };
}

export interface SyntheticTruth {
	pullDownS: number;
	secondaryStartS: number;
	/** null when there is no tail */
	backfillS: number | null;
	annealingStartS: number | null;
	profileEndS: number;
	endpoint: { onsetS: number; midpointS: number; offsetS: number } | null;
}

function inWindow(list: InjectedOffset[] | undefined, t: number): number | null {
	if (!list) return null;
	for (const w of list) if (t >= w.startS && t < w.endS) return w.amount;
	return null;
}

export function buildSyntheticCycle(o: SyntheticOptions): { series: CycleSeries; truth: SyntheticTruth } {
	const profile = expectedProfile(o.recipe);
	const profileEndS = profile[profile.length - 1].tS;
	const tailS = o.tailS ?? 1200;
	const n = Math.floor((profileEndS + tailS) / o.sampleS) + 1;
	const t = new Float64Array(n);
	for (let i = 0; i < n; i++) t[i] = i * o.sampleS;
	const gauss = createGaussian(o.seed);
	const sShelf = o.noise?.shelfC ?? 0.15;
	const sProd = o.noise?.productC ?? 0.2;
	const sP = o.noise?.pressureRel ?? 0.01;
	const upper = o.endpoint?.upper ?? 1.6;
	const lower = o.endpoint?.lower ?? 1.0;
	const tsub = o.sublimationC ?? -36;
	const pullDownS = profile.find((p) => p.phase === 'primary-drying')?.tS ?? NaN;
	const secondaryStartS = profile.find((p) => p.phase === 'secondary-drying')?.tS ?? NaN;
	const annealingStartS = profile.find((p) => p.phase === 'annealing')?.tS ?? null;

	const width = o.wide ? 2 : 1;
	const shelf = Array.from({ length: width }, () => new Float64Array(n));
	const product = Array.from({ length: o.wide ? 4 : 1 }, () => new Float64Array(n));
	const manometer = new Float64Array(n);
	const pirani = new Float64Array(n);
	const spShelf = new Float64Array(n);
	const spPressure = new Float64Array(n);
	const condenser = new Float64Array(n);
	const other = new Float64Array(n);

	let shelfState = o.recipe.loadingShelfC;
	let prodState = o.recipe.loadingShelfC;
	let pState = 101325;
	const pTau = o.pressureTauS ?? 60;
	const ice = (x: number, tau: number) => (o.endpoint ? 1 / (1 + Math.exp((x - o.endpoint.midpointS) / tau)) : 1);
	// Lags are causal: the state at t[i] has followed, during (t[i−1], t[i]], the setpoint in
	// force at t[i−1], so a setpoint change at a sample time first shows at the next sample.
	let spPrev = 101325;
	let shelfPlanPrev = o.recipe.loadingShelfC;
	for (let i = 0; i < n; i++) {
		const ti = t[i];
		const plan = evaluateProfile(profile, ti);
		const ended = ti >= profileEndS;
		const spP = ended ? (tailS > 0 ? 80000 : (plan.pressurePa ?? 101325)) : (plan.pressurePa ?? 101325);
		const dt = i === 0 ? 0 : ti - t[i - 1];
		// Shelf: exact profile or first-order lag of it.
		const lag = o.shelfLagS ?? 0;
		shelfState = lag > 0 && i > 0 ? shelfPlanPrev + (shelfState - shelfPlanPrev) * Math.exp(-dt / lag) : plan.shelfC;
		shelfPlanPrev = plan.shelfC;
		const sx = inWindow(o.shelfExcursions, ti) ?? 0;
		for (const s of shelf) s[i] = shelfState + sx + sShelf * gauss();
		// Chamber pressure: first-order lag of the setpoint.
		pState = i === 0 ? spP : spPrev + (pState - spPrev) * Math.exp(-dt / pTau);
		spPrev = spP;
		const px = inWindow(o.pressureExcursions, ti) ?? 1;
		const p = pState * px;
		const vacuum = ti >= pullDownS && !ended;
		const vapour = vacuum ? (1 - Math.exp(-(ti - pullDownS) / 600)) * ice(ti, o.endpoint?.tauS ?? 1) : 0;
		const ratio = lower + (upper - lower) * vapour;
		const m = p * (1 + sP * gauss());
		manometer[i] = m > 133.3 ? 0 : m;
		pirani[i] = Math.min(1e5, p * ratio * (1 + sP * gauss()));
		spShelf[i] = plan.shelfC;
		spPressure[i] = ended ? NaN : (plan.pressurePa ?? NaN);
		// Product: lags the shelf; under vacuum held at the sublimation temperature while its ice
		// lasts (probe vials dry 4× more sharply than the batch ratio falls, centred on its midpoint).
		const f = vacuum ? ice(ti, (o.endpoint?.tauS ?? 1) / 4) : 0;
		const target = f * Math.min(shelfState, tsub) + (1 - f) * shelfState;
		prodState = i === 0 ? target : target + (prodState - target) * Math.exp(-dt / 1200);
		const prx = inWindow(o.productExcursions, ti) ?? 0;
		for (const pr of product) pr[i] = prodState + prx + sProd * gauss();
		condenser[i] = -75 + 0.3 * gauss();
		other[i] = 20 + 0.1 * gauss();
	}
	const channels: SeriesChannel[] = [
		...shelf.map((values, k) => ({ id: `shelf-${k + 1}`, role: 'shelf' as const, unit: 'degC' as const, values })),
		...product.map((values, k) => ({ id: `product-${k + 1}`, role: 'product' as const, unit: 'degC' as const, values })),
		{ id: 'cm', role: 'manometer', unit: 'Pa', values: manometer },
		{ id: 'pirani', role: 'pirani', unit: 'Pa', values: pirani }
	];
	if (o.wide) {
		channels.push(
			{ id: 'sp-shelf', role: 'setpoint-shelf', unit: 'degC', values: spShelf },
			{ id: 'sp-pressure', role: 'setpoint-pressure', unit: 'Pa', values: spPressure },
			{ id: 'condenser', role: 'condenser', unit: 'degC', values: condenser },
			{ id: 'room', role: 'other', unit: 'degC', values: other }
		);
	}
	if (o.pressureRise) {
		const { startS, durationS, slopePaPerS } = o.pressureRise;
		for (let i = 0; i < n; i++) {
			if (t[i] < startS || t[i] > startS + durationS) continue;
			const rise = slopePaPerS * (t[i] - startS);
			if (manometer[i] > 0) manometer[i] += rise;
			pirani[i] += rise;
		}
	}
	for (const g of o.gaps ?? []) {
		for (const c of channels) {
			if (c.role !== g.role) continue;
			for (let i = 0; i < n; i++) if (t[i] >= g.startS && t[i] < g.endS) c.values[i] = NaN;
		}
	}
	const tau = o.endpoint?.tauS;
	return {
		series: { t, channels },
		truth: {
			pullDownS,
			secondaryStartS,
			backfillS: tailS > 0 ? profileEndS : null,
			annealingStartS,
			profileEndS,
			endpoint:
				o.endpoint && tau
					? {
							onsetS: o.endpoint.midpointS - 2 * tau,
							midpointS: o.endpoint.midpointS,
							offsetS: o.endpoint.midpointS + 2 * tau
						}
					: null
		}
	};
}

export interface CsvLogOptions {
	/** lines written before the header row (title, dryer, export date ...) */
	preamble?: string[];
	delimiter?: string;
	/** time column: seconds, minutes, or a clock time of day starting at startClockS */
	time: 'elapsed-seconds' | 'elapsed-minutes' | 'clock' | 'iso';
	/** clock and iso: time of day of the first row, s (default 8 h) */
	startClockS?: number;
	/** iso: the date of the first row (default 2026-01-12) */
	startDate?: string;
	/** pressure unit written for manometer, Pirani and pressure setpoint (canonical Pa) */
	pressureUnit?: 'Pa' | 'mbar' | 'ubar' | 'mTorr' | 'Torr';
	/** temperatures written in °C or K (canonical °C) */
	temperatureUnit?: 'degC' | 'K';
	/** written instead of NaN (a "no reading" placeholder such as 999.9); default empty cell */
	placeholder?: string;
	/** an unmapped column with a constant, and a trailing delimiter on every line */
	quirks?: boolean;
	decimals?: number;
}

const PRESSURE_FACTORS: Record<NonNullable<CsvLogOptions['pressureUnit']>, number> = {
	Pa: 1,
	mbar: 1 / 100,
	ubar: 10,
	mTorr: 760_000 / 101_325,
	Torr: 760 / 101_325
};

function pad2(x: number): string {
	return x < 10 ? `0${x}` : String(x);
}

function formatClock(s: number): string {
	const d = ((s % 86_400) + 86_400) % 86_400;
	return `${pad2(Math.floor(d / 3600))}:${pad2(Math.floor((d % 3600) / 60))}:${pad2(Math.floor(d % 60))}`;
}

/**
 * Writes a series as the CSV a data logger might export (invented layout, no maker's format):
 * the column names are the channel ids, the time column is "Time". With the delimiter ";" numbers
 * are written with a decimal comma, as loggers set up for such locales do.
 */
export function writeCsvLog(series: CycleSeries, o: CsvLogOptions): string {
	const d = o.delimiter ?? ',';
	const decimals = o.decimals ?? 3;
	const pf = PRESSURE_FACTORS[o.pressureUnit ?? 'Pa'];
	const kelvin = o.temperatureUnit === 'K';
	const startClock = o.startClockS ?? 8 * 3600;
	const [y, mo, day] = (o.startDate ?? '2026-01-12').split('-').map(Number);
	const base = Date.UTC(y, mo - 1, day) / 1000 + startClock;
	const tail = o.quirks ? `${d}1${d}` : '';
	const lines: string[] = [...(o.preamble ?? [])];
	lines.push(['Time', ...series.channels.map((c) => c.id)].join(d) + (o.quirks ? `${d}Door${d}` : ''));
	const n = series.t.length;
	const scales = series.channels.map((c) => (c.unit === 'Pa' ? pf : 1));
	const offsets = series.channels.map((c) => (c.unit === 'degC' && kelvin ? 273.15 : 0));
	const missing = o.placeholder ?? '';
	for (let i = 0; i < n; i++) {
		const ti = series.t[i];
		let time: string;
		if (o.time === 'elapsed-seconds') time = String(ti);
		else if (o.time === 'elapsed-minutes') time = String(ti / 60);
		else if (o.time === 'clock') time = formatClock(startClock + ti);
		else time = new Date((base + ti) * 1000).toISOString().slice(0, 19);
		let row = time;
		for (let k = 0; k < series.channels.length; k++) {
			const v = series.channels[k].values[i];
			const cell = Number.isNaN(v) ? missing : (v * scales[k] + offsets[k]).toFixed(series.channels[k].unit === 'Pa' ? Math.max(decimals, 6) : decimals);
			row += d + (d === ';' ? cell.replace('.', ',') : cell);
		}
		lines.push(row + tail);
	}
	return lines.join('\r\n') + '\r\n';
}
