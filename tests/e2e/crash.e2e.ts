import { expect, test } from '@playwright/test';
import { runCrashRounds } from '../crash/crash-rounds';

// Issue 9 "Crash safety" (21 CFR 11.10(a), (e); EU GMP Annex 11 §7.1, §12.4): the built server is
// SIGKILLed while clients write signed entries and issue signed batches; after each restart every
// acknowledged write is present and the audit chain verifies. Node-side only (no browser): our own
// `node build` on a free port with a fresh store. CRASH_ROUNDS sets the rounds (soak: 20+).
const rounds = Math.max(1, Number(process.env.CRASH_ROUNDS ?? 3));
const kinds: ('pglite' | 'postgresql')[] = process.env.DATABASE_URL_TEST ? ['pglite', 'postgresql'] : ['pglite'];

for (const kind of kinds) {
	test(`SIGKILL during signed writes loses no acknowledged write and the chain verifies (${kind})`, async () => {
		test.setTimeout(240_000 + rounds * 90_000);
		const s = await runCrashRounds({ kind, rounds, log: (l) => console.log(l) });
		console.log(`[crash ${kind}] ${s.rounds} rounds, ${s.acknowledged} acknowledged writes, ${s.unacknowledgedInFlight} cut off in flight, ${s.auditEvents} audit events`);
		expect(s.rounds).toBe(rounds);
		expect(s.writeErrors).toEqual([]);
		// Writes were acknowledged in the rounds, or the test proved nothing.
		expect(s.acknowledged).toBeGreaterThan(rounds);
		expect(s.missing).toEqual([]);
		expect(s.chainFailures).toEqual([]);
	});
}
