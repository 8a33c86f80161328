import { describe, expect, it } from 'vitest';
import { ConfigError, parseConfig } from '$lib/server/config';

describe('configuration (one validated module over the environment)', () => {
	it('has documented defaults for an empty environment', () => {
		const c = parseConfig({});
		expect(c.PORT).toBe(3000);
		expect(c.RIMEBOOK_DATA_DIR).toBe('./data');
		expect(c.RIMEBOOK_SEED).toBe('demo');
		expect(c.RIMEBOOK_SITE_TIMEZONE).toBe('UTC');
		expect(c.DATABASE_URL).toBeUndefined();
		// NIST SP 800-63B-4 / ASVS V7: idle 15 min and absolute 12 h by default (the values).
		expect(c.RIMEBOOK_SESSION_IDLE_MINUTES).toBe(15);
		expect(c.RIMEBOOK_SESSION_ABSOLUTE_MINUTES).toBe(720);
	});

	it('accepts IANA time zone names (IANA tz database) and refuses others, naming the variable', () => {
		expect(parseConfig({ RIMEBOOK_SITE_TIMEZONE: 'Europe/Berlin' }).RIMEBOOK_SITE_TIMEZONE).toBe('Europe/Berlin');
		expect(() => parseConfig({ RIMEBOOK_SITE_TIMEZONE: 'Mars/Olympus_Mons' })).toThrow(/RIMEBOOK_SITE_TIMEZONE must be an IANA time zone/);
	});

	it('names every bad variable at once, with what is allowed and what it got', () => {
		try {
			parseConfig({ PORT: '99999', RIMEBOOK_SEED: 'sample', DATABASE_URL: 'mysql://x' });
			expect.unreachable('parseConfig should have thrown');
		} catch (err) {
			expect(err).toBeInstanceOf(ConfigError);
			const e = err as ConfigError;
			expect(e.problems).toHaveLength(3);
			expect(e.message).toMatch(/PORT must be a whole number from 0 \(any free port\) to 65535 \(got "99999"\)/);
			expect(e.message).toMatch(/RIMEBOOK_SEED must be 'demo' or 'none' \(got "sample"\)/);
			expect(e.message).toMatch(/DATABASE_URL must be a postgres:\/\/ or postgresql:\/\/ connection URL/);
		}
	});

	it('treats an empty variable as not set, as a shell VAR= does', () => {
		expect(parseConfig({ DATABASE_URL: '', PORT: '' }).PORT).toBe(3000);
	});

	it('refuses a demo password shorter than the password rules allow', () => {
		expect(() => parseConfig({ RIMEBOOK_DEMO_PASSWORD: 'short' })).toThrow(/RIMEBOOK_DEMO_PASSWORD must be at least 12 characters/);
	});

	it('refuses an ORIGIN that is not a URL', () => {
		expect(() => parseConfig({ ORIGIN: 'localhost:3000' })).toThrow(/ORIGIN must be the public URL/);
	});
});
