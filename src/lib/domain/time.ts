/** Calendar date (YYYY-MM-DD) of an instant in a time zone: what "today" means at the site. */
export function dateInZone(instant: Date, timeZone: string): string {
	const parts = new Intl.DateTimeFormat('en-CA', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit' }).formatToParts(instant);
	const get = (t: string) => parts.find((p) => p.type === t)?.value ?? '';
	return `${get('year')}-${get('month')}-${get('day')}`;
}

/**
 * Formatters by zone and locale: building an Intl.DateTimeFormat costs far more than using one
 * (a printed record formats thousands of instants), and both are immutable, so they are shared.
 */
const zonedFormatters = new Map<string, Intl.DateTimeFormat>();

function zonedFormatter(timeZone: string, locale: string): Intl.DateTimeFormat {
	const key = `${locale}\u0000${timeZone}`;
	let formatter = zonedFormatters.get(key);
	if (!formatter) {
		formatter = new Intl.DateTimeFormat(locale, {
			timeZone,
			year: 'numeric',
			month: '2-digit',
			day: '2-digit',
			hour: '2-digit',
			minute: '2-digit',
			second: '2-digit',
			hour12: false,
			timeZoneName: 'short'
		});
		// Bounded: zones and locales come from configuration and preferences, but never let input grow it.
		if (zonedFormatters.size > 256) zonedFormatters.clear();
		zonedFormatters.set(key, formatter);
	}
	return formatter;
}

/**
 * An instant shown in the site time zone with the zone's name, as signature manifestations need
 * (21 CFR 11.50(a)(2): date and time of signing).
 */
export function formatInZone(instant: Date | string, timeZone: string, locale = 'en-GB'): string {
	const d = typeof instant === 'string' ? new Date(instant) : instant;
	return zonedFormatter(timeZone, locale).format(d);
}
