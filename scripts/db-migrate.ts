// `npm run db:migrate`: applies pending migrations to the configured database (RIMEBOOK_DATA_DIR
// or DATABASE_URL), all in one transaction, and says what it did. Does not seed.
import { getConfig } from '../src/lib/server/config';
import { openDatabase } from '../src/lib/server/db/client';

const config = getConfig();
const handle = openDatabase({ dataDir: config.RIMEBOOK_DATA_DIR, databaseUrl: config.DATABASE_URL });
try {
	await handle.connect();
	await handle.migrate(config.RIMEBOOK_MIGRATIONS_DIR);
	console.log(`Migrations applied to the ${handle.kind === 'pglite' ? `PGlite database in ${config.RIMEBOOK_DATA_DIR}` : 'PostgreSQL server'}.`);
} catch (err) {
	console.error(err instanceof Error ? err.message : err);
	process.exitCode = 1;
} finally {
	await handle.close();
}
