import { defineConfig } from 'drizzle-kit';

// Migrations are generated from the schema into ./drizzle and committed; the app applies them
// at start-up (PGlite and PostgreSQL alike), so both run the exact same SQL.
export default defineConfig({
	schema: './src/lib/server/db/schema.ts',
	out: './drizzle',
	dialect: 'postgresql'
});
