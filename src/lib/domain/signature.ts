import { formatInZone } from './time';

/**
 * Signature meanings (21 CFR 11.50(a)(3)): what the signer attests. `gmp` meanings sign GMP
 * records; admins never give those (design.md, roles; 11.200(a)(3): misuse needs collusion).
 */
export const signatureMeanings = {
	authored: { gmp: true, label: 'Authored' },
	reviewed: { gmp: true, label: 'Reviewed' },
	approved: { gmp: true, label: 'Approved' },
	issued: { gmp: true, label: 'Issued' },
	performed: { gmp: true, label: 'Performed' },
	verified: { gmp: true, label: 'Verified' },
	released: { gmp: true, label: 'Released' },
	rejected: { gmp: true, label: 'Rejected' },
	/** QA withdraws a record with a reason (a deviation raised in error, a duplicate). */
	cancelled: { gmp: true, label: 'Cancelled' },
	/** The signer's own accountability statement (11.100(c), 11.10(j)): not a GMP record. */
	acknowledged: { gmp: false, label: 'Acknowledged' }
} as const;

export type SignatureMeaning = keyof typeof signatureMeanings;
export const signatureMethods = ['password', 'passkey'] as const;
export type SignatureMethod = (typeof signatureMethods)[number];

export function isSignatureMeaning(value: unknown): value is SignatureMeaning {
	return typeof value === 'string' && Object.hasOwn(signatureMeanings, value);
}

export function isGmpMeaning(meaning: SignatureMeaning): boolean {
	return signatureMeanings[meaning].gmp;
}

/** What a manifestation needs of a signature row. */
export interface SignatureFacts {
	printedName: string;
	meaning: SignatureMeaning | string;
	/** Server UTC instant, ISO 8601. */
	at: string;
	/** The site time zone in force at signing (IANA name). */
	timeZone: string;
	method?: SignatureMethod | string;
}

export interface Manifestation {
	name: string;
	meaning: string;
	/** Date and time in the site zone with its abbreviation, then the IANA zone name. */
	when: string;
	/** The same instant in UTC, so a printout is unambiguous whatever the zone. */
	utc: string;
	/** One line for tables and printouts: "Priya Halden · Approved · 2026-05-03 14:22:05 CEST (Europe/Berlin)". */
	text: string;
}

/**
 * The manifestation shown wherever a signed record is displayed or printed (21 CFR 11.50(a):
 * printed name, date and time, meaning; Annex 11, 14: with the time zone).
 */
export function formatManifestation(sig: SignatureFacts, options: { meaningLabel?: string; locale?: string } = {}): Manifestation {
	const meaning = options.meaningLabel ?? (isSignatureMeaning(sig.meaning) ? signatureMeanings[sig.meaning].label : sig.meaning);
	const when = `${formatIso(sig.at, sig.timeZone)} (${sig.timeZone})`;
	const utc = `${formatIso(sig.at, 'UTC')}`;
	return { name: sig.printedName, meaning, when, utc, text: `${sig.printedName} · ${meaning} · ${when}` };
}

/** YYYY-MM-DD HH:MM:SS ZONE: ISO order reads the same in every language and on paper. */
function formatIso(at: string, timeZone: string): string {
	return formatInZone(at, timeZone, 'sv-SE');
}
