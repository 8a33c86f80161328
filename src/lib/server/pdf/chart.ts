import {
	lineTo,
	moveTo,
	popGraphicsState,
	pushGraphicsState,
	rgb,
	setDashPattern,
	setLineWidth,
	setStrokingColor,
	stroke,
	type PDFOperator,
	type RGB
} from 'pdf-lib';
import type { ChartOverlay } from '$lib/domain/lyo/overlay';
import { axisTicks } from '$lib/domain/pdf-layout';
import { ALERT, CONTENT_WIDTH, INK, MARGIN, MUTED, RULE, type Flow } from './layout';

/**
 * The freeze-drying cycle as vector graphics (ISO 32000-1 8.5: path construction and painting
 * operators), not an image: lines stay sharp at any zoom and the drawing is part of the signed
 * document's content. Temperatures on the left axis (°C), chamber pressure on the right (Pa,
 * logarithmic, as pressures span decades), hours along the bottom; the recipe's acceptable
 * ranges are the same bands the excursion check used (domain/lyo/overlay.ts).
 */
export interface ChartModel {
	title: string;
	/** seconds from the log's start */
	t: number[];
	channels: { id: string; role: string; unit: string | null; values: (number | null)[] }[];
	overlay: Pick<ChartOverlay, 'phases' | 'shelfBands' | 'pressureBands' | 'shelfSetpoint' | 'excursions'>;
}

export interface ChartWords {
	hours: string;
	temperature: string;
	pressure: string;
	shelfBand: string;
	pressureBand: string;
	setpoint: string;
	excursion: string;
	phases: Record<string, string>;
}

const COLORS: Record<string, RGB> = {
	shelf: rgb(0.85, 0.45, 0.05),
	product: rgb(0.1, 0.35, 0.75),
	condenser: rgb(0.45, 0.45, 0.45),
	manometer: rgb(0.1, 0.5, 0.3),
	pirani: rgb(0.55, 0.3, 0.65)
};
const TEMPERATURE_ROLES = new Set(['shelf', 'product', 'condenser']);
const PRESSURE_ROLES = new Set(['manometer', 'pirani']);

export function drawCycleChart(flow: Flow, chart: ChartModel, words: ChartWords): void {
	const height = 230;
	flow.ensure(height + 70);
	flow.text(chart.title, { bold: true, size: 9 });
	const box = { x: MARGIN.left + 34, y: flow.y - height, w: CONTENT_WIDTH - 70, h: height - 14 };
	const page = flow.page;
	const n = chart.t.length;
	const t0 = n ? chart.t[0] : 0;
	const t1 = n ? chart.t[n - 1] : 1;
	const temps = chart.channels.filter((c) => TEMPERATURE_ROLES.has(c.role));
	const pressures = chart.channels.filter((c) => PRESSURE_ROLES.has(c.role));
	const tRange = range([...temps.flatMap((c) => c.values), ...chart.overlay.shelfBands.flatMap((b) => [b.lo, b.hi])]);
	const pValues = [...pressures.flatMap((c) => c.values), ...chart.overlay.pressureBands.flatMap((b) => [b.lo, b.hi])].filter((v): v is number => v !== null && v > 0);
	const pLog = range(pValues.map((v) => Math.log10(v)));
	const pLo = Math.floor(pLog.lo);
	const pHi = Math.max(pLo + 1, Math.ceil(pLog.hi));
	const xOf = (s: number) => box.x + ((s - t0) / Math.max(1e-9, t1 - t0)) * box.w;
	const yT = (c: number) => box.y + ((c - tRange.lo) / Math.max(1e-9, tRange.hi - tRange.lo)) * box.h;
	const yP = (pa: number) => box.y + ((Math.log10(pa) - pLo) / (pHi - pLo)) * box.h;
	const clampY = (y: number) => Math.max(box.y, Math.min(box.y + box.h, y));

	// Phases: labelled spans along the top.
	for (const ph of chart.overlay.phases) {
		const a = xOf(ph.startS);
		const b = xOf(ph.endS);
		page.drawRectangle({ x: a, y: box.y, width: Math.max(0, b - a), height: box.h, color: rgb(0.93, 0.95, 0.98), opacity: 0.6 });
		page.drawLine({ start: { x: a, y: box.y }, end: { x: a, y: box.y + box.h }, thickness: 0.3, color: RULE });
		// A phase too narrow for its name gets it one line higher, so names never overprint.
		const name = words.phases[ph.name] ?? ph.name;
		const fits = flow.measure(name, { size: 6.5 }) + 4 <= b - a;
		flow.drawLine(name, a + 2, box.y + box.h + (fits ? 3 : 11), { size: 6.5, color: MUTED });
	}
	// Acceptable ranges (the recipe bands): translucent rectangles.
	for (const b of chart.overlay.shelfBands) {
		if (!Number.isFinite(b.lo) || !Number.isFinite(b.hi)) continue;
		const y0 = clampY(yT(b.lo));
		page.drawRectangle({ x: xOf(b.fromS), y: y0, width: Math.max(0.2, xOf(b.toS) - xOf(b.fromS)), height: Math.max(0.2, clampY(yT(b.hi)) - y0), color: COLORS.shelf, opacity: 0.16 });
	}
	for (const b of chart.overlay.pressureBands) {
		if (!(b.lo > 0) || !(b.hi > 0)) continue;
		const y0 = clampY(yP(b.lo));
		page.drawRectangle({ x: xOf(b.fromS), y: y0, width: Math.max(0.2, xOf(b.toS) - xOf(b.fromS)), height: Math.max(0.2, clampY(yP(b.hi)) - y0), color: COLORS.manometer, opacity: 0.14 });
	}
	// Axes and ticks.
	page.drawRectangle({ x: box.x, y: box.y, width: box.w, height: box.h, borderColor: MUTED, borderWidth: 0.6 });
	for (const c of axisTicks(tRange.lo, tRange.hi, 6)) {
		const y = yT(c);
		page.drawLine({ start: { x: box.x - 3, y }, end: { x: box.x, y }, thickness: 0.5, color: MUTED });
		const label = String(c);
		flow.drawLine(label, box.x - 5 - flow.measure(label, { size: 6.5 }), y - 2, { size: 6.5, color: MUTED });
	}
	for (let e = pLo; e <= pHi; e++) {
		const y = yP(10 ** e);
		page.drawLine({ start: { x: box.x + box.w, y }, end: { x: box.x + box.w + 3, y }, thickness: 0.5, color: MUTED });
		flow.drawLine(String(10 ** e >= 1 ? 10 ** e : Number((10 ** e).toPrecision(1))), box.x + box.w + 5, y - 2, { size: 6.5, color: MUTED });
	}
	for (const h of axisTicks(t0 / 3600, t1 / 3600, 10)) {
		const x = xOf(h * 3600);
		page.drawLine({ start: { x, y: box.y - 3 }, end: { x, y: box.y }, thickness: 0.5, color: MUTED });
		flow.drawLine(String(h), x - flow.measure(String(h), { size: 6.5 }) / 2, box.y - 11, { size: 6.5, color: MUTED });
	}
	flow.drawLine(words.temperature, MARGIN.left, box.y + box.h + 3, { size: 6.5, color: MUTED });
	flow.drawLine(words.pressure, box.x + box.w - flow.measure(words.pressure, { size: 6.5 }), box.y + box.h + 12, { size: 6.5, color: MUTED });
	flow.drawLine(words.hours, box.x + box.w / 2 - flow.measure(words.hours, { size: 6.5 }) / 2, box.y - 20, { size: 6.5, color: MUTED });

	// Setpoint, dashed; then the logged traces.
	const ops: PDFOperator[] = [pushGraphicsState()];
	if (chart.overlay.shelfSetpoint.length) {
		ops.push(setStrokingColor(INK), setLineWidth(0.6), setDashPattern([3, 2], 0));
		for (const s of chart.overlay.shelfSetpoint) ops.push(moveTo(xOf(s.fromS), clampY(yT(s.fromValue))), lineTo(xOf(s.toS), clampY(yT(s.toValue))));
		ops.push(stroke(), setDashPattern([], 0));
	}
	for (const c of [...temps, ...pressures]) {
		const y = TEMPERATURE_ROLES.has(c.role) ? yT : (v: number) => (v > 0 ? yP(v) : Number.NaN);
		ops.push(setStrokingColor(COLORS[c.role] ?? INK), setLineWidth(0.7));
		let open = false;
		for (let i = 0; i < n; i++) {
			const v = c.values[i];
			const py = v === null ? Number.NaN : y(v);
			if (!Number.isFinite(py)) {
				open = false;
				continue;
			}
			ops.push(open ? lineTo(xOf(chart.t[i]), clampY(py)) : moveTo(xOf(chart.t[i]), clampY(py)));
			open = true;
		}
		ops.push(stroke());
	}
	// Excursions: red bars under the plot, so they read without colour too (labelled in the legend).
	ops.push(setStrokingColor(ALERT), setLineWidth(2.5));
	for (const ex of chart.overlay.excursions) ops.push(moveTo(xOf(ex.startS), box.y + 2), lineTo(Math.max(xOf(ex.endS), xOf(ex.startS) + 1.5), box.y + 2));
	ops.push(stroke(), popGraphicsState());
	page.pushOperators(...ops);

	flow.y = box.y - 26;
	const legend = [
		...[...temps, ...pressures].map((c) => ({ label: `${c.id} (${c.role})`, color: COLORS[c.role] ?? INK })),
		{ label: words.shelfBand, color: COLORS.shelf },
		{ label: words.pressureBand, color: COLORS.manometer },
		{ label: `- - ${words.setpoint}`, color: INK },
		{ label: `▬ ${words.excursion}`, color: ALERT }
	];
	let x = MARGIN.left;
	for (const item of legend) {
		const w = flow.measure(item.label, { size: 6.5 }) + 14;
		if (x + w > MARGIN.left + CONTENT_WIDTH) {
			x = MARGIN.left;
			flow.y -= 10;
		}
		page.drawRectangle({ x, y: flow.y + 0.5, width: 6, height: 4, color: item.color });
		flow.drawLine(item.label, x + 8, flow.y, { size: 6.5 });
		x += w;
	}
	flow.y -= 14;
}

function range(values: (number | null)[]): { lo: number; hi: number } {
	let lo = Infinity;
	let hi = -Infinity;
	for (const v of values) {
		if (v === null || !Number.isFinite(v)) continue;
		if (v < lo) lo = v;
		if (v > hi) hi = v;
	}
	if (!Number.isFinite(lo)) return { lo: 0, hi: 1 };
	const pad = (hi - lo) * 0.05 || 1;
	return { lo: lo - pad, hi: hi + pad };
}
