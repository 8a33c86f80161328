/**
 * Vapour pressure of ice (sublimation curve) and the enthalpy of sublimation.
 *
 * Temperatures here are thermodynamic temperatures in kelvin, pressures in Pa (canonical).
 * Outside an equation's range of validity the functions return NaN (the series convention for
 * "no value") rather than extrapolating silently.
 *
 * Sources:
 * - IAPWS R14-08(2011), "Revised Release on the Pressure along the Melting and Sublimation
 *   Curves of Ordinary Water Substance" (Wagner, Riethmann, Feistel & Harvey), eq. (6):
 *   ln(p/pt) = θ⁻¹ Σ aᵢ θ^bᵢ, θ = T/Tt, Tt = 273.16 K, pt = 611.657 Pa, valid 50 K ≤ T ≤ Tt.
 *   This is the international standard; use it for anything that is reported.
 * - Murphy & Koop (2005), "Review of the vapour pressures of ice and supercooled water for
 *   atmospheric applications", Q. J. R. Meteorol. Soc. 131, 1539–1565: eq. (7) p(T) for
 *   T > 110 K, eq. (8) its closed-form inverse, eq. (5) the molar enthalpy of sublimation.
 */

/** Triple point of water, IAPWS R14-08(2011). */
export const TRIPLE_POINT_K = 273.16;
export const TRIPLE_POINT_PA = 611.657;
/** Lower limit of the IAPWS sublimation equation. */
export const IAPWS_SUBLIMATION_MIN_K = 50;
/** Lower limit of Murphy & Koop (2005) eq. 7. */
export const MURPHY_KOOP_MIN_K = 110;
/** Molar mass of water used by IAPWS-95 (IAPWS R6-95), g/mol (value from memory). */
export const WATER_MOLAR_MASS_G_PER_MOL = 18.015268;

// IAPWS R14-08(2011), Table 4 coefficients of eq. (6).
const IAPWS_A = [-21.2144006, 27.3203819, -6.1059813] as const;
const IAPWS_B = [0.00333333333, 1.20666667, 1.70333333] as const;

/** ln(p/pt) of IAPWS R14-08 eq. (6) and its derivative with respect to T (1/K). */
function evaluateIapwsLog(tK: number): { lnRatio: number; dLnRatioDT: number } {
	const theta = tK / TRIPLE_POINT_K;
	let sum = 0;
	let dSum = 0;
	for (let i = 0; i < 3; i++) {
		// θ⁻¹ aᵢ θ^bᵢ = aᵢ θ^(bᵢ−1); d/dθ = aᵢ (bᵢ−1) θ^(bᵢ−2)
		sum += IAPWS_A[i] * theta ** (IAPWS_B[i] - 1);
		dSum += IAPWS_A[i] * (IAPWS_B[i] - 1) * theta ** (IAPWS_B[i] - 2);
	}
	return { lnRatio: sum, dLnRatioDT: dSum / TRIPLE_POINT_K };
}

/**
 * Sublimation pressure of ice, IAPWS R14-08(2011) eq. (6). Pa; NaN outside 50–273.16 K.
 * Check value printed in the release: p(230 K) = 8.94735 × 10⁻⁶ MPa.
 */
export function computeSublimationPressureIapws(tK: number): number {
	if (!(tK >= IAPWS_SUBLIMATION_MIN_K && tK <= TRIPLE_POINT_K)) return NaN;
	return TRIPLE_POINT_PA * Math.exp(evaluateIapwsLog(tK).lnRatio);
}

/** Sublimation pressure of ice, Murphy & Koop (2005) eq. (7). Pa; NaN below 110 K or above Tt. */
export function computeSublimationPressureMurphyKoop(tK: number): number {
	if (!(tK > MURPHY_KOOP_MIN_K && tK <= TRIPLE_POINT_K)) return NaN;
	return Math.exp(9.550426 - 5723.265 / tK + 3.53068 * Math.log(tK) - 0.00728332 * tK);
}

/**
 * Frost-point temperature (K) for an ice vapour pressure (Pa), Murphy & Koop (2005) eq. (8):
 * T = (1.814625 ln p + 6190.134) / (29.120 − ln p). This closed form approximates the inverse of
 * eq. (7); measured against eq. (7) it is within 0.035 K from 150 K to 273.16 K (see tests).
 * NaN for p ≤ 0, non-finite p, or p above the triple-point pressure.
 */
export function computeSublimationTemperatureMurphyKoop(pPa: number): number {
	if (!(pPa > 0 && pPa <= TRIPLE_POINT_PA * (1 + 1e-9))) return NaN;
	const lnP = Math.log(pPa);
	return (1.814625 * lnP + 6190.134) / (29.12 - lnP);
}

/**
 * Frost-point temperature (K) for an ice vapour pressure (Pa): numeric inverse of IAPWS R14-08
 * eq. (6). Newton's method on ln p (smooth and monotonic in T), started from Murphy & Koop eq. (8)
 * and guarded by bisection on [50 K, 273.16 K]; converges to |ΔT| < 1e-10 K in a few steps.
 * NaN outside p(50 K) … pt.
 */
export function computeSublimationTemperatureIapws(pPa: number): number {
	if (!(pPa > 0) || !Number.isFinite(pPa)) return NaN;
	const target = Math.log(pPa / TRIPLE_POINT_PA);
	let lo = IAPWS_SUBLIMATION_MIN_K;
	let hi = TRIPLE_POINT_K;
	if (target > 1e-12 || target < evaluateIapwsLog(lo).lnRatio) return NaN;
	if (target >= 0) return TRIPLE_POINT_K;
	const start = computeSublimationTemperatureMurphyKoop(pPa);
	let t = Number.isFinite(start) && start > lo && start < hi ? start : 0.5 * (lo + hi);
	for (let iter = 0; iter < 100; iter++) {
		const { lnRatio, dLnRatioDT } = evaluateIapwsLog(t);
		const f = lnRatio - target;
		// ln p increases with T, so f > 0 means t is too warm.
		if (f > 0) hi = t;
		else lo = t;
		let next = t - f / dLnRatioDT;
		if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
		if (Math.abs(next - t) < 1e-10) return next;
		t = next;
	}
	return t;
}

/**
 * Molar enthalpy of sublimation of ice, Murphy & Koop (2005) eq. (5), J/mol, stated valid for
 * T > 30 K (range from memory):
 * ΔH = 46782.5 + 35.8925 T − 0.07414 T² + 541.5 exp(−(T/123.75)²). NaN outside 30–273.16 K.
 */
export function computeSublimationEnthalpy(tK: number): number {
	if (!(tK > 30 && tK <= TRIPLE_POINT_K)) return NaN;
	return 46782.5 + 35.8925 * tK - 0.07414 * tK * tK + 541.5 * Math.exp(-((tK / 123.75) ** 2));
}

/** Specific enthalpy of sublimation (J/g) = eq. (5) / M(H₂O); ≈ 2838 J/g at −30 °C. */
export function computeSpecificSublimationEnthalpy(tK: number): number {
	return computeSublimationEnthalpy(tK) / WATER_MOLAR_MASS_G_PER_MOL;
}

/** Convenience for canonical °C data: IAPWS sublimation pressure (Pa) at t in °C. */
export function computeIcePressureAtCelsius(tC: number): number {
	return computeSublimationPressureIapws(tC + 273.15);
}
