import canonicalize from 'canonicalize';

/**
 * RFC 8785 (JSON Canonicalization Scheme) text of a value: the exact bytes that are hashed for
 * the audit chain, signature binding (21 CFR 11.70) and template hashes.
 */
export function canonicalJson(value: unknown): string {
	const text = canonicalize(value);
	if (text === undefined) throw new TypeError('A value that JSON cannot represent cannot be canonicalised.');
	return text;
}
