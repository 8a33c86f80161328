/**
 * Request bodies read with a hard cap, so no route buffers more than it will ever accept
 * (OWASP ASVS 5.0 V2.2: no unbounded input): a declared content-length over the cap is refused
 * unread, and the stream is cancelled the moment it passes the cap (a chunked body declares
 * nothing). Each area turns "too large" into its own error through `tooLarge`.
 */
export async function readBodyCapped(request: Request, maxBytes: number, tooLarge: () => Error): Promise<Uint8Array<ArrayBuffer>> {
	const declared = Number(request.headers.get('content-length') ?? NaN);
	if (Number.isFinite(declared) && declared > maxBytes) throw tooLarge();
	const reader = request.body?.getReader();
	if (!reader) return new Uint8Array();
	const chunks: Uint8Array[] = [];
	let size = 0;
	for (;;) {
		const { done, value } = await reader.read();
		if (done) break;
		size += value.byteLength;
		if (size > maxBytes) {
			await reader.cancel();
			throw tooLarge();
		}
		chunks.push(value);
	}
	const out = new Uint8Array(size);
	let at = 0;
	for (const c of chunks) {
		out.set(c, at);
		at += c.byteLength;
	}
	return out;
}

/** A form body (multipart or urlencoded) parsed from bytes already read within the cap; null if unreadable. */
export async function parseFormBytes(bytes: Uint8Array<ArrayBuffer>, contentType: string | null): Promise<FormData | null> {
	try {
		return await new Response(bytes, { headers: { 'content-type': contentType ?? 'application/x-www-form-urlencoded' } }).formData();
	} catch {
		return null;
	}
}

/** "256 kB", "2 MB": the cap as a person reads it. */
export function describeBytes(maxBytes: number): string {
	return maxBytes >= 1048576 ? `${maxBytes / 1048576} MB` : `${maxBytes / 1024} kB`;
}
