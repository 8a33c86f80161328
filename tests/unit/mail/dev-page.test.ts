import { describe, expect, test, vi } from 'vitest';
import { isHttpError } from '@sveltejs/kit';

// The development mailbox must not exist in production (issue 8: "a development-only page").
vi.mock('$lib/server/config', async (importOriginal) => {
	const real = await importOriginal<typeof import('$lib/server/config')>();
	const production = real.parseConfig({ NODE_ENV: 'production' });
	return { ...real, getConfig: () => production };
});

describe('the development mailbox in production', () => {
	test('answers 404 to everyone, administrators included, before reading anything', async () => {
		const { load } = await import('../../../src/routes/(app)/dev/mail/+page.server');
		const admin = { id: 'u-admin', username: 'admin', name: 'Test admin', kind: 'person', roles: ['admin'], mustChangePassword: false, locale: 'en' };
		const event = { locals: { user: admin, session: null }, url: new URL('http://localhost/dev/mail') } as unknown as Parameters<typeof load>[0];
		const err = await Promise.resolve()
			.then(() => load(event))
			.catch((e: unknown) => e);
		expect(isHttpError(err)).toBe(true);
		expect((err as { status: number }).status).toBe(404);
	});
});
