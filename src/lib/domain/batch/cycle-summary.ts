/**
 * The summary of a cycle run as a freeze-drying step of a batch shows it (issue 7, "Into the
 * batch record"): times from the log start in hours and minutes, and each excursion with the
 * deviation it raised. Pure, no I/O.
 */
import type { Excursion } from '../lyo/excursions';

/**
 * Seconds from the log start as people read a cycle: "20 h 05 min", "35 min", "45 s". Minutes
 * are rounded (a cycle log is read to the minute); a negative time keeps its sign.
 */
export function formatElapsed(seconds: number): string {
	if (!Number.isFinite(seconds)) return '—';
	const sign = seconds < 0 ? '−' : '';
	const s = Math.abs(seconds);
	if (s < 60) return `${sign}${Math.round(s)} s`;
	const totalMin = Math.round(s / 60);
	const h = Math.floor(totalMin / 60);
	const min = totalMin % 60;
	if (h === 0) return `${sign}${min} min`;
	return `${sign}${h} h ${String(min).padStart(2, '0')} min`;
}

export interface DeviationRef {
	id: string;
	number: string;
	status: string;
	createdAt: string;
}

/** The running number of a deviation (DEV-<year>-<n>), for the order in which they were raised. */
export function deviationSequence(number: string): number {
	const m = /-(\d+)$/.exec(number);
	return m ? Number(m[1]) : Number.NaN;
}

/**
 * Pairs the excursion groups of a run (in the order the upload raised one deviation each, see
 * cycles/runs.ts groupExcursions) with the run's deviations in the order they were raised. When
 * the counts differ — a deviation raised by hand for the run, or a run stored without a batch
 * step — nothing is paired and `unpaired` holds every deviation, so none is hidden or misnamed.
 */
export function pairExcursionDeviations<D extends DeviationRef>(
	groups: readonly (readonly Excursion[])[],
	deviations: readonly D[]
): { byExcursion: Map<Excursion, D>; unpaired: D[] } {
	const ordered = [...deviations].sort((a, b) => a.createdAt.localeCompare(b.createdAt) || deviationSequence(a.number) - deviationSequence(b.number));
	const byExcursion = new Map<Excursion, D>();
	if (ordered.length !== groups.length) return { byExcursion, unpaired: ordered };
	groups.forEach((g, i) => {
		for (const e of g) byExcursion.set(e, ordered[i]);
	});
	return { byExcursion, unpaired: [] };
}
