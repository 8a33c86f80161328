/**
 * Canvas overlays of the cycle chart, drawn through uPlot hooks: phases shaded behind the traces,
 * the recipe's acceptable ranges as bands, its setpoint as a dashed line, excursions and the
 * comparative-pressure endpoint marked on top. Every mark carries a text label as well as a
 * colour, so it reads in print and for colour-blind users (design.md, "Look and words").
 */
import type uPlot from 'uplot';
import type { ChartOverlay } from '$lib/domain/lyo/overlay';

export interface OverlayLabels {
	phases: Record<string, string>;
	onset: string;
	midpoint: string;
	offset: string;
}

export interface OverlayUnits {
	/** canonical °C → shown temperature unit */
	temperature: (c: number) => number;
	/** canonical Pa → shown pressure unit */
	pressure: (pa: number) => number;
}

const PHASE_FILL: Record<string, string> = {
	freezing: 'rgba(59,125,187,0.08)',
	annealing: 'rgba(107,63,160,0.08)',
	'primary-drying': 'rgba(29,107,69,0.06)',
	'secondary-drying': 'rgba(138,90,0,0.07)'
};

function xPos(u: uPlot, s: number): number {
	return u.valToPos(s, 'x', true);
}

function clampX(u: uPlot, x: number): number {
	return Math.max(u.bbox.left, Math.min(u.bbox.left + u.bbox.width, x));
}

/** Behind the traces: phases and bands. */
export function drawBackground(u: uPlot, o: ChartOverlay, labels: OverlayLabels, units: OverlayUnits): void {
	const ctx = u.ctx;
	const { top, height } = u.bbox;
	const dpr = devicePixelRatio || 1;
	ctx.save();
	ctx.beginPath();
	ctx.rect(u.bbox.left, top, u.bbox.width, height);
	ctx.clip();
	ctx.font = `${Math.round(11 * dpr)}px "Noto Sans", sans-serif`;
	ctx.textBaseline = 'top';
	for (const p of o.phases) {
		const a = clampX(u, xPos(u, p.startS));
		const b = clampX(u, xPos(u, p.endS));
		if (b - a < 1) continue;
		ctx.fillStyle = PHASE_FILL[p.name] ?? 'rgba(0,0,0,0.04)';
		ctx.fillRect(a, top, b - a, height);
		ctx.strokeStyle = 'rgba(43,58,82,0.35)';
		ctx.lineWidth = dpr;
		ctx.beginPath();
		ctx.moveTo(a, top);
		ctx.lineTo(a, top + height);
		ctx.stroke();
		const text = labels.phases[p.name] ?? p.name;
		if (ctx.measureText(text).width + 8 * dpr < b - a) {
			ctx.fillStyle = '#2b3a52';
			ctx.fillText(text, a + 4 * dpr, top + 4 * dpr);
		}
	}
	const band = (rects: ChartOverlay['shelfBands'], scale: string, conv: (v: number) => number, fill: string, stroke: string) => {
		ctx.fillStyle = fill;
		ctx.strokeStyle = stroke;
		ctx.setLineDash([4 * dpr, 3 * dpr]);
		ctx.lineWidth = dpr;
		for (const r of rects) {
			if (!Number.isFinite(r.lo) || !Number.isFinite(r.hi)) continue;
			const a = xPos(u, r.fromS);
			const b = xPos(u, r.toS);
			const y1 = u.valToPos(conv(r.hi), scale, true);
			const y2 = u.valToPos(conv(r.lo > 0 || scale === 'temp' ? r.lo : 1e-6), scale, true);
			ctx.fillRect(a, y1, b - a, y2 - y1);
			ctx.beginPath();
			ctx.moveTo(a, y1);
			ctx.lineTo(b, y1);
			ctx.moveTo(a, y2);
			ctx.lineTo(b, y2);
			ctx.stroke();
		}
		ctx.setLineDash([]);
	};
	band(o.shelfBands, 'temp', units.temperature, 'rgba(31,95,153,0.10)', 'rgba(31,95,153,0.55)');
	band(o.pressureBands, 'press', units.pressure, 'rgba(29,107,69,0.10)', 'rgba(29,107,69,0.6)');
	ctx.restore();
}

/** On top of the traces: recipe setpoints, excursions and the endpoint. */
export function drawMarks(u: uPlot, o: ChartOverlay, labels: OverlayLabels, units: OverlayUnits): void {
	const ctx = u.ctx;
	const { top, height } = u.bbox;
	const dpr = devicePixelRatio || 1;
	ctx.save();
	ctx.beginPath();
	ctx.rect(u.bbox.left, top, u.bbox.width, height);
	ctx.clip();
	ctx.lineWidth = 1.5 * dpr;
	ctx.setLineDash([6 * dpr, 4 * dpr]);
	ctx.strokeStyle = '#0e1a2b';
	ctx.beginPath();
	for (const s of o.shelfSetpoint) {
		ctx.moveTo(xPos(u, s.fromS), u.valToPos(units.temperature(s.fromValue), 'temp', true));
		ctx.lineTo(xPos(u, s.toS), u.valToPos(units.temperature(s.toValue), 'temp', true));
	}
	ctx.stroke();
	ctx.strokeStyle = '#175738';
	ctx.beginPath();
	for (const s of o.pressureSetpoint) {
		ctx.moveTo(xPos(u, s.fromS), u.valToPos(units.pressure(s.fromValue), 'press', true));
		ctx.lineTo(xPos(u, s.toS), u.valToPos(units.pressure(s.toValue), 'press', true));
	}
	ctx.stroke();
	ctx.setLineDash([]);
	ctx.font = `600 ${Math.round(11 * dpr)}px "Noto Sans", sans-serif`;
	ctx.textBaseline = 'top';
	o.excursions.forEach((e, i) => {
		const a = xPos(u, e.startS);
		const b = Math.max(a + 2 * dpr, xPos(u, e.endS));
		ctx.fillStyle = 'rgba(179,38,30,0.11)';
		ctx.fillRect(a, top, b - a, height);
		ctx.fillStyle = '#b3261e';
		ctx.fillRect(a, top + height - 6 * dpr, b - a, 6 * dpr);
		// Overlapping excursions (inlet and outlet probes) get stacked labels, not one over the other.
		const stack = o.excursions.slice(0, i).filter((p) => p.endS >= e.startS && p.startS <= e.endS).length;
		ctx.fillText(`⚠ E${i + 1}`, a + 2 * dpr, top + (20 + 13 * stack) * dpr);
	});
	if (o.endpoint) {
		const marks: [number, string][] = [
			[o.endpoint.onsetS, labels.onset],
			[o.endpoint.midpointS, labels.midpoint],
			[o.endpoint.offsetS, labels.offset]
		];
		ctx.strokeStyle = '#6b3fa0';
		ctx.fillStyle = '#4a2a73';
		ctx.lineWidth = 1.5 * dpr;
		marks.forEach(([s, text], k) => {
			const x = xPos(u, s);
			ctx.setLineDash(k === 1 ? [] : [3 * dpr, 3 * dpr]);
			ctx.beginPath();
			ctx.moveTo(x, top);
			ctx.lineTo(x, top + height);
			ctx.stroke();
			ctx.fillText(text, x + 3 * dpr, top + (36 + 13 * k) * dpr);
		});
		ctx.setLineDash([]);
	}
	ctx.restore();
}
