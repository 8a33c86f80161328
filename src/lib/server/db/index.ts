import { getConfig } from '../config';
import { openDatabase } from './client';

/** This process's database: PGlite in RIMEBOOK_DATA_DIR, or the PostgreSQL server of DATABASE_URL. */
export const database = openDatabase({
	dataDir: getConfig().RIMEBOOK_DATA_DIR,
	databaseUrl: getConfig().DATABASE_URL
});
