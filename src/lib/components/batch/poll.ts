/**
 * Keeps a batch page current: asks GET /api/batches/<id>?since=<version> every few seconds and
 * calls `onChange` when the version moved (a supervisor sees an operator's progress without
 * reloading). Pauses while the tab is hidden. Returns a stop function.
 */
export function pollBatch(batchId: string, version: () => number, onChange: () => void, onReachable: (ok: boolean) => void, intervalMs = 4000): () => void {
	let stopped = false;
	let timer: ReturnType<typeof setTimeout> | undefined;
	async function tick() {
		if (stopped) return;
		if (document.visibilityState === 'visible') {
			try {
				const res = await fetch(`/api/batches/${encodeURIComponent(batchId)}?since=${version()}`, { headers: { accept: 'application/json' } });
				onReachable(res.ok);
				if (res.ok) {
					const body = (await res.json()) as { unchanged?: boolean; version: number };
					if (!body.unchanged) onChange();
				}
			} catch {
				onReachable(false);
			}
		}
		timer = setTimeout(tick, intervalMs);
	}
	timer = setTimeout(tick, intervalMs);
	return () => {
		stopped = true;
		if (timer) clearTimeout(timer);
	};
}
