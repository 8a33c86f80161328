/**
 * When to try a notification again, and when to give up. Pure (no I/O), so the schedule is tested
 * on its own (tests/unit/mail/backoff.test.ts).
 *
 * Exponential backoff (common practice): 30 s after the first failure, doubling, at most an hour
 * apart. Give up when the row is older than five days: RFC 5321 4.5.4.1 says a sender's "give-up
 * time generally needs to be at least 4-5 days" and retries "at least 30 minutes" apart once the
 * early tries fail; the hour cap keeps to that, the short first delays cover a server restart.
 */
export interface RetryPolicy {
	baseSeconds: number;
	maxSeconds: number;
	giveUpSeconds: number;
}

export const defaultRetryPolicy: RetryPolicy = { baseSeconds: 30, maxSeconds: 3600, giveUpSeconds: 5 * 24 * 3600 };

/** Seconds to wait after the `attempts`-th failed attempt (attempts ≥ 1). */
export function retryDelaySeconds(attempts: number, policy: RetryPolicy = defaultRetryPolicy): number {
	const n = Math.max(1, Math.floor(attempts));
	// 2^(n-1) overflows to Infinity for huge n; min() then still gives the cap.
	return Math.min(policy.maxSeconds, policy.baseSeconds * 2 ** (n - 1));
}

/**
 * A failure that retrying cannot mend: the server refused this recipient for good (RFC 5321 4.2.1:
 * a 5yz reply is a permanent negative completion), or the address itself is malformed. A 5yz at
 * AUTH or MAIL FROM is not: it is a configuration fault an administrator fixes, after which the
 * queued mail must still go out.
 */
export function isPermanentFailure(err: { responseCode?: number; command?: string; code?: string }): boolean {
	if (err.code !== 'EENVELOPE' || err.command === 'MAIL FROM') return false;
	if (err.command === 'API') return true;
	const code = err.responseCode ?? 0;
	return code >= 500 && code < 600;
}

/** Whether a row first queued `ageSeconds` ago has been tried long enough. */
export function shouldGiveUp(ageSeconds: number, policy: RetryPolicy = defaultRetryPolicy): boolean {
	return ageSeconds >= policy.giveUpSeconds;
}
