/**
 * A person's display preferences (issue 6): temperature and pressure units, time format. Values
 * are stored canonical (°C, Pa) whatever is chosen here (design.md, "Units"). Pure.
 */
import { z } from 'zod';
import { PRESSURE_UNITS, TEMPERATURE_UNITS, type Unit } from '../units';

export const preferencesSchema = z.object({
	temperatureUnit: z.enum(TEMPERATURE_UNITS).default('degC'),
	pressureUnit: z.enum(PRESSURE_UNITS).default('Pa'),
	timeFormat: z.enum(['24h', '12h']).default('24h')
});
export type Preferences = z.infer<typeof preferencesSchema>;
export const defaultPreferences: Preferences = preferencesSchema.parse({});

/** Preferences from the stored jsonb (anything unreadable falls back to the defaults). */
export function readPreferences(stored: unknown): Preferences {
	const parsed = preferencesSchema.safeParse(stored ?? {});
	return parsed.success ? parsed.data : defaultPreferences;
}

/** The unit a person sees a value of this canonical unit in. */
export function displayUnitFor(canonical: Unit, prefs: Preferences): Unit {
	if (canonical === 'degC') return prefs.temperatureUnit;
	if (canonical === 'Pa') return prefs.pressureUnit;
	return canonical;
}

/** Date and time in the site zone, as the person prefers to read it (with the zone's name). */
export function formatWhen(instant: string | Date, timeZone: string, prefs: Pick<Preferences, 'timeFormat'>, locale = 'en-GB'): string {
	const d = typeof instant === 'string' ? new Date(instant) : instant;
	return new Intl.DateTimeFormat(locale, {
		timeZone,
		year: 'numeric',
		month: '2-digit',
		day: '2-digit',
		hour: '2-digit',
		minute: '2-digit',
		hour12: prefs.timeFormat === '12h',
		timeZoneName: 'short'
	}).format(d);
}
