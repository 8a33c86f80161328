import type { LayoutServerLoad } from './$types';
import { requireUser } from '$lib/server/auth/guard';

// Every page in (app) also guards its own load and actions; this only spares a round trip.
export const load = (async (event) => {
	requireUser(event);
	return {};
}) satisfies LayoutServerLoad;
