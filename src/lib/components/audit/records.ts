/** Where an audited record can be opened in the app; null when it has no page (yet). */
const recordPages: Record<string, (id: string) => string> = {
	batch: (id) => `/batches/${encodeURIComponent(id)}`,
	'master-record': (id) => `/masters/${encodeURIComponent(id)}`,
	equipment: (id) => `/equipment/${encodeURIComponent(id)}`,
	user: (id) => `/people/${encodeURIComponent(id)}`,
	deviation: (id) => `/deviations/${encodeURIComponent(id)}`
};

export function recordHref(entityType: string, entityId: string | null): string | null {
	const page = recordPages[entityType] as ((id: string) => string) | undefined;
	return page && entityId ? page(entityId) : null;
}
