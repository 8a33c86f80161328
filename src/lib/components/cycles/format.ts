/** Display helpers shared by the cycle pages (display only; stored values stay canonical). */
export function formatHours(s: number, digits = 2): string {
	return (s / 3600).toFixed(digits);
}

/** "36 h 12 min" */
export function formatDuration(s: number): string {
	const total = Math.round(s / 60);
	const h = Math.floor(total / 60);
	const min = total % 60;
	return h > 0 ? `${h} h ${String(min).padStart(2, '0')} min` : `${min} min`;
}
