/** Calendar date (YYYY-MM-DD) of an instant in a time zone: what "today" means at the site. */
export function dateInZone(instant: Date, timeZone: string): string {
	const parts = new Intl.DateTimeFormat('en-CA', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit' }).formatToParts(instant);
	const get = (t: string) => parts.find((p) => p.type === t)?.value ?? '';
	return `${get('year')}-${get('month')}-${get('day')}`;
}

/**
 * An instant shown in the site time zone with the zone's name, as signature manifestations need
 * (21 CFR 11.50(a)(2): date and time of signing).
 */
export function formatInZone(instant: Date | string, timeZone: string, locale = 'en-GB'): string {
	const d = typeof instant === 'string' ? new Date(instant) : instant;
	const text = new Intl.DateTimeFormat(locale, {
		timeZone,
		year: 'numeric',
		month: '2-digit',
		day: '2-digit',
		hour: '2-digit',
		minute: '2-digit',
		second: '2-digit',
		hour12: false,
		timeZoneName: 'short'
	}).format(d);
	return text;
}
