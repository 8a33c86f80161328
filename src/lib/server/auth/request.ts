import type { RequestEvent } from '@sveltejs/kit';

/**
 * The client address for rate limiting and the attempt log. Behind a reverse proxy set
 * adapter-node's ADDRESS_HEADER (and XFF_DEPTH) so this is the client, not the proxy.
 */
export function clientAddress(event: Pick<RequestEvent, 'getClientAddress'>): string {
	try {
		return event.getClientAddress();
	} catch {
		return 'unknown';
	}
}
