/**
 * Product temperature against the product's critical temperature (collapse, eutectic or Tg′).
 *
 * Tang & Pikal (2004), Pharm. Res. 21(2), 191–200: during primary drying the product (the ice
 * at the sublimation front, read by thermocouples in probe vials) must stay below the critical
 * temperature, by a margin of about 2 °C for long cycles (rule of thumb, from memory, see
 * lyophilization.md). The recipe states the margin it requires.
 *
 * Window: primary drying, ended early at the comparative-pressure onset when one was found
 * inside primary drying. After the onset the batch is running out of ice, and a probe whose vial
 * has dried reads the dry cake warming toward the shelf: that is not the sublimation interface
 * and not a collapse risk for that vial, so counting it would report every cycle as "above
 * critical". Probe vials also tend to dry earlier than the batch (less supercooling, larger ice
 * crystals; a known bias of thermocouple vials, from memory), which is why the batch signal
 * (the onset) and not each probe's own temperature rise ends the window.
 * With several probes the worst (warmest) reading at each sample is used.
 */

export interface ProductSummary {
	/** highest product temperature in the window, °C; null without a product probe reading */
	maxC: number | null;
	/** smallest (critical − product), °C = critical − maxC; null without probe or recipe */
	minMarginC: number | null;
	/** time with the warmest probe above the critical temperature, s (0 without a recipe) */
	timeAboveCriticalS: number;
}

/**
 * Summarises a product temperature trace (worst probe per sample) over [fromS, toS]. Time above
 * critical interpolates the crossing between neighbouring readings; a gap longer than maxGapS
 * between readings contributes nothing (unknown, not assumed).
 */
export function summariseProduct(
	t: Float64Array,
	product: Float64Array | null,
	fromS: number,
	toS: number,
	criticalC: number | null,
	maxGapS: number
): ProductSummary {
	if (!product) return { maxC: null, minMarginC: null, timeAboveCriticalS: 0 };
	let maxC = -Infinity;
	let above = 0;
	let prev = -1;
	for (let i = 0; i < t.length; i++) {
		if (t[i] < fromS) continue;
		if (t[i] > toS) break;
		const x = product[i];
		if (Number.isNaN(x)) continue;
		if (x > maxC) maxC = x;
		if (criticalC !== null && prev >= 0 && t[i] - t[prev] <= maxGapS) {
			const a = product[prev] - criticalC;
			const b = x - criticalC;
			const dt = t[i] - t[prev];
			if (a > 0 && b > 0) above += dt;
			else if (a > 0 || b > 0) above += (dt * Math.max(a, b)) / Math.abs(b - a);
		}
		prev = i;
	}
	if (maxC === -Infinity) return { maxC: null, minMarginC: null, timeAboveCriticalS: 0 };
	return { maxC, minMarginC: criticalC === null ? null : criticalC - maxC, timeAboveCriticalS: above };
}

/** Highest product reading in [fromS, toS] (NaN if none), e.g. just before the pull-down. */
export function findProductMaximum(t: Float64Array, product: Float64Array, fromS: number, toS: number): number {
	let m = NaN;
	for (let i = 0; i < t.length; i++) {
		if (t[i] < fromS) continue;
		if (t[i] > toS) break;
		const x = product[i];
		if (!Number.isNaN(x) && !(x <= m)) m = x;
	}
	return m;
}
