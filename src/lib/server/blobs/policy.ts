/**
 * What may be attached to a step (issue 6): a content-type allow-list and a size limit. The
 * bytes are checked against the type claimed (a "PDF" must start like one), not only the header.
 */
export const ALLOWED_TYPES = ['application/pdf', 'image/png', 'image/jpeg', 'text/csv', 'text/plain'] as const;
export type AllowedType = (typeof ALLOWED_TYPES)[number];

/** Default largest attachment, MB: the template's default for attachment fields (schemas/template.ts). */
export const DEFAULT_MAX_MB = 20;

export function blobLimits(): { types: readonly string[]; maxMb: number } {
	return { types: ALLOWED_TYPES, maxMb: DEFAULT_MAX_MB };
}

const SIGNATURES: Record<string, (b: Uint8Array) => boolean> = {
	// ISO 32000-1, 7.5.2: a PDF file begins with "%PDF-".
	'application/pdf': (b) => b.length >= 5 && String.fromCharCode(...b.subarray(0, 5)) === '%PDF-',
	// PNG (RFC 2083 / ISO 15948) signature: 89 50 4E 47 0D 0A 1A 0A.
	'image/png': (b) => b.length >= 8 && [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a].every((x, i) => b[i] === x),
	// JPEG (ITU-T T.81): starts with SOI FF D8 and a marker FF.
	'image/jpeg': (b) => b.length >= 3 && b[0] === 0xff && b[1] === 0xd8 && b[2] === 0xff,
	'text/csv': isText,
	'text/plain': isText
};

function isText(b: Uint8Array): boolean {
	if (b.includes(0)) return false;
	try {
		new TextDecoder('utf-8', { fatal: true }).decode(b);
		return true;
	} catch {
		return false;
	}
}

/** The media type without parameters, lower case ("text/csv; charset=utf-8" → "text/csv"). */
export function baseType(contentType: string | null): string {
	return (contentType ?? '').split(';')[0].trim().toLowerCase();
}

/** Whether the bytes are what their type says. */
export function matchesType(type: string, bytes: Uint8Array): boolean {
	return SIGNATURES[type]?.(bytes) ?? false;
}
