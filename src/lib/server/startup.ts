import { getConfig } from './config';
import type { DatabaseHandle } from './db/client';
import { seedDemo, isDatabaseEmpty } from './db/seed';

/**
 * Brings a database to this release: connect, migrate (all or nothing), and seed the demo on an
 * empty database unless RIMEBOOK_SEED=none. Throws with the cause and the fix; callers exit non-zero.
 */
export async function prepareDatabase(handle: DatabaseHandle): Promise<{ seeded: boolean }> {
	const config = getConfig();
	await handle.connect();
	await handle.migrate(config.RIMEBOOK_MIGRATIONS_DIR);
	if (config.RIMEBOOK_SEED === 'demo' && (await isDatabaseEmpty(handle.db))) {
		await seedDemo(handle.db, { password: config.RIMEBOOK_DEMO_PASSWORD });
		return { seeded: true };
	}
	return { seeded: false };
}
