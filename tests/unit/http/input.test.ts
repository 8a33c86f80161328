import { describe, expect, it } from 'vitest';
import { refusalOfInput } from '$lib/server/http/input';

const url = new URL('http://localhost/api/things');

/** A JSON POST whose body stream counts the bytes anyone pulls from it. */
function jsonPost(text: string, declare = true) {
	const bytes = new TextEncoder().encode(text);
	const pulled = { bytes: 0 };
	let at = 0;
	const body = new ReadableStream<Uint8Array>({
		pull(controller) {
			if (at >= bytes.length) return controller.close();
			const chunk = bytes.subarray(at, at + 64 * 1024);
			at += chunk.length;
			pulled.bytes += chunk.length;
			controller.enqueue(chunk);
		}
	});
	const headers: Record<string, string> = { 'content-type': 'application/json' };
	if (declare) headers['content-length'] = String(bytes.length);
	const request = new Request(url, { method: 'POST', body, headers, duplex: 'half' } as RequestInit);
	return { event: { request, url, params: {} }, pulled };
}

describe('the malformed-input guard', () => {
	// RFC 8259 §7 allows any code point escaped; PostgreSQL text cannot hold U+0000 (PostgreSQL docs, 8.3).
	it('refuses NUL inside a JSON string with 400', async () => {
		const { event } = jsonPost(JSON.stringify({ comment: 'a\u0000b' }));
		expect(await refusalOfInput(event)).toMatchObject({ status: 400 });
	});

	// OWASP ASVS 5.0 V2.2: no unbounded input; a body larger than any route takes is not buffered by the guard.
	it('leaves a JSON body larger than any route takes unread, declared or streamed', async () => {
		const big = JSON.stringify({ comment: 'a\u0000b', pad: 'x'.repeat(5 * 1024 * 1024) });
		const declared = jsonPost(big);
		expect(await refusalOfInput(declared.event)).toBeNull();
		// A stream pulls its first chunk by itself (WHATWG Streams, highWaterMark 1); the guard reads nothing more.
		expect(declared.pulled.bytes).toBeLessThanOrEqual(64 * 1024);
		expect((await declared.event.request.text()).length).toBe(big.length);
		const streamed = jsonPost(big, false);
		expect(await refusalOfInput(streamed.event)).toBeNull();
		// The guard stops at its 4 MiB cap; the tee of Request.clone() may pull a few chunks ahead.
		expect(streamed.pulled.bytes).toBeLessThanOrEqual(4 * 1024 * 1024 + 3 * 64 * 1024);
		expect(streamed.pulled.bytes).toBeLessThan(big.length);
		// The route still reads the whole body from the original request.
		expect((await streamed.event.request.text()).length).toBe(big.length);
	});
});
