import { describe, expect, test } from 'vitest';
import { defaultRetryPolicy, isPermanentFailure, retryDelaySeconds, shouldGiveUp } from '$lib/server/mail/backoff';

describe('mail retry schedule', () => {
	test('delays double from 30 s and stop growing at one hour', () => {
		// Exponential backoff (common practice): 30 · 2^(n−1) s, capped.
		expect([1, 2, 3, 4, 5, 6, 7, 8, 9].map((n) => retryDelaySeconds(n))).toEqual([30, 60, 120, 240, 480, 960, 1920, 3600, 3600]);
		expect(retryDelaySeconds(10_000)).toBe(3600);
		expect(retryDelaySeconds(0)).toBe(30);
	});

	test('the give-up time is five days, within RFC 5321 4.5.4.1 ("at least 4-5 days")', () => {
		expect(defaultRetryPolicy.giveUpSeconds).toBe(5 * 86_400);
		expect(shouldGiveUp(4 * 86_400)).toBe(false);
		expect(shouldGiveUp(5 * 86_400)).toBe(true);
		// RFC 5321 4.5.4.1: once retrying, intervals of at least 30 minutes; the cap (1 h) respects it.
		expect(defaultRetryPolicy.maxSeconds).toBeGreaterThanOrEqual(30 * 60);
	});

	test('only a recipient refused with 5yz, or a malformed address, is permanent (RFC 5321 4.2.1)', () => {
		// Shapes as nodemailer 10 reports them (smtp-connection _formatError: code, command, responseCode).
		expect(isPermanentFailure({ code: 'EENVELOPE', command: 'RCPT TO', responseCode: 550 })).toBe(true);
		expect(isPermanentFailure({ code: 'EENVELOPE', command: 'RCPT TO', responseCode: 553 })).toBe(true);
		expect(isPermanentFailure({ code: 'EENVELOPE', command: 'API' })).toBe(true);
		// 4yz: transient negative completion (RFC 5321 4.2.1), e.g. 450 mailbox busy, 451 local error.
		expect(isPermanentFailure({ code: 'EENVELOPE', command: 'RCPT TO', responseCode: 450 })).toBe(false);
		// A sender refused (MAIL FROM), or credentials refused (RFC 4954 6: 535), is a configuration fault: retry.
		expect(isPermanentFailure({ code: 'EENVELOPE', command: 'MAIL FROM', responseCode: 550 })).toBe(false);
		expect(isPermanentFailure({ code: 'EAUTH', command: 'AUTH PLAIN', responseCode: 535 })).toBe(false);
		// The server not there at all.
		expect(isPermanentFailure({ code: 'ESOCKET' })).toBe(false);
		expect(isPermanentFailure({ code: 'ECONNECTION' })).toBe(false);
	});
});
