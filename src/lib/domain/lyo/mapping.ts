/**
 * The column mapping of a cycle log (issue 7): which row holds the column names, which column is
 * the time and in what format, which columns are channels with what role and unit, and which
 * values mean "no reading". It is the only thing that adapts the importer to a logger: no preset
 * tied to one equipment maker (lyophilization.md, "Real cycle logs").
 *
 * JSON, as the API takes it:
 * { "headerRow": 1, "time": { "column": "...", "format": "...", "start": "<ISO date, for clock>" },
 *   "channels": [ { "column": "...", "role": "...", "unit": "..." } ], "placeholders": [999.9] }
 * Two optional keys of our own: "delimiter" (default: detected from the header row among
 * , ; tab |) and "decimalSeparator" ("." default, or "," for logs written with a decimal comma).
 */
import { z } from 'zod';
import { PRESSURE_UNITS, TEMPERATURE_UNITS, type CanonicalUnit } from '../units';
import { CHANNEL_ROLES, ROLE_UNITS, type ChannelRole } from './series';

export const TIME_FORMATS = ['elapsed-seconds', 'elapsed-minutes', 'iso', 'clock'] as const;
export type TimeFormat = (typeof TIME_FORMATS)[number];

/** Units a log column may be written in: the temperature and pressure units of units.ts. */
export const LOG_UNITS = [...TEMPERATURE_UNITS, ...PRESSURE_UNITS] as const;
export type LogUnit = (typeof LOG_UNITS)[number];

export const DELIMITERS = [',', ';', '\t', '|'] as const;

/** Larger files are refused before they are read: a 72 h log at 1 s with 12 channels is ~30 MB. */
export const MAX_LOG_BYTES = 64 * 1024 * 1024;

const ISO_DATE = /^\d{4}-\d{2}-\d{2}$/;

export function isTemperatureUnit(unit: LogUnit): boolean {
	return (TEMPERATURE_UNITS as readonly string[]).includes(unit);
}

/** The canonical unit a channel is stored in: its role's, or for 'other' its quantity's. */
export function canonicalUnitFor(role: ChannelRole, unit: LogUnit): CanonicalUnit {
	if (role !== 'other') return ROLE_UNITS[role];
	return isTemperatureUnit(unit) ? 'degC' : 'Pa';
}

/** Why a unit does not fit a role, or null when it does. */
export function checkRoleUnit(role: ChannelRole, unit: LogUnit): string | null {
	if (role === 'other') return null;
	const wantsTemperature = ROLE_UNITS[role] === 'degC';
	if (wantsTemperature === isTemperatureUnit(unit)) return null;
	return `role "${role}" is a ${wantsTemperature ? 'temperature' : 'pressure'}; unit "${unit}" is a ${wantsTemperature ? 'pressure' : 'temperature'} unit`;
}

export const mappingChannelSchema = z.strictObject({
	column: z.string().trim().min(1).max(200),
	role: z.enum(CHANNEL_ROLES),
	unit: z.enum(LOG_UNITS)
});
export type MappingChannel = z.infer<typeof mappingChannelSchema>;

export const cycleLogMappingSchema = z
	.strictObject({
		/** 1-based line number of the row with the column names; lines before it are skipped */
		headerRow: z.number().int().min(1).max(10_000),
		time: z.strictObject({
			column: z.string().trim().min(1).max(200),
			format: z.enum(TIME_FORMATS),
			/** the calendar date of the first row (YYYY-MM-DD), required for clock */
			start: z.string().trim().max(40).optional()
		}),
		channels: z.array(mappingChannelSchema).min(1, 'map at least one channel').max(64),
		placeholders: z.array(z.number().finite()).max(20).default([]),
		delimiter: z.enum(DELIMITERS).optional(),
		decimalSeparator: z.enum(['.', ',']).optional()
	})
	.superRefine((m, ctx) => {
		if (m.time.format === 'clock' && !(m.time.start && ISO_DATE.test(m.time.start))) {
			ctx.addIssue({ code: 'custom', path: ['time', 'start'], message: 'a clock time needs the start date of the log (YYYY-MM-DD)' });
		}
		const seen = new Set<string>([m.time.column]);
		m.channels.forEach((c, i) => {
			if (seen.has(c.column)) {
				ctx.addIssue({ code: 'custom', path: ['channels', i, 'column'], message: `column "${c.column}" is mapped twice` });
			}
			seen.add(c.column);
			const misfit = checkRoleUnit(c.role, c.unit);
			if (misfit) ctx.addIssue({ code: 'custom', path: ['channels', i, 'unit'], message: `column "${c.column}": ${misfit}` });
		});
		if (m.decimalSeparator === ',' && (m.delimiter ?? ',') === ',') {
			ctx.addIssue({ code: 'custom', path: ['decimalSeparator'], message: 'a decimal comma needs another delimiter (; tab or |)' });
		}
	});
export type CycleLogMapping = z.output<typeof cycleLogMappingSchema>;
export type CycleLogMappingInput = z.input<typeof cycleLogMappingSchema>;

/** One readable sentence per zod issue: "channels.2.unit: column "P1": role ..." */
export function describeMappingIssues(error: z.ZodError): string[] {
	return error.issues.map((i) => (i.path.length ? `${i.path.join('.')}: ${i.message}` : i.message));
}
