// `npm run user:create -- --username NAME --name "Printed Name" [--email E] [--roles admin,qa] [--reason TEXT]`
//
// Creates an account on the configured database (RIMEBOOK_DATA_DIR or DATABASE_URL, opened and
// migrated exactly as the app does) — above all the first administrator of a production start
// with RIMEBOOK_SEED=none. It prints a one-time password once; the person must change it at
// first sign-in (NIST SP 800-63B-4 §3.1.1.2). The creation is audited with the system as actor.
import { parseArgs } from 'node:util';
import { getConfig } from '../src/lib/server/config';
import { openDatabase } from '../src/lib/server/db/client';
import { systemActor } from '../src/lib/server/audit/ledger';
import { createAccount } from '../src/lib/server/users/admin';
import { isAuthError } from '../src/lib/server/auth/errors';
import { isRole, type Role } from '../src/lib/domain/permissions';

const { values } = parseArgs({
	options: {
		username: { type: 'string' },
		name: { type: 'string' },
		email: { type: 'string' },
		roles: { type: 'string', default: 'admin' },
		reason: { type: 'string', default: 'Account created with npm run user:create' }
	}
});

function usage(problem: string): never {
	console.error(`${problem}\nUsage: npm run user:create -- --username NAME --name "Printed Name" [--email E] [--roles admin,qa] [--reason TEXT]`);
	process.exit(2);
}

if (!values.username) usage('--username is missing.');
if (!values.name) usage('--name (the printed name shown with signatures) is missing.');
const roles = values.roles.split(',').map((r) => r.trim()).filter(Boolean);
const unknown = roles.filter((r) => !isRole(r));
if (unknown.length) usage(`Unknown role(s): ${unknown.join(', ')}. Roles: author, operator, supervisor, qa, inspector, admin.`);

const config = getConfig();
const handle = openDatabase({ dataDir: config.RIMEBOOK_DATA_DIR, databaseUrl: config.DATABASE_URL });
try {
	await handle.connect();
	await handle.migrate(config.RIMEBOOK_MIGRATIONS_DIR);
	const created = await createAccount(
		handle.db,
		systemActor,
		{ username: values.username, name: values.name, email: values.email ?? null, kind: 'person', roles: roles as Role[] },
		values.reason
	);
	const where = handle.kind === 'pglite' ? `PGlite in ${config.RIMEBOOK_DATA_DIR}` : 'the PostgreSQL server';
	console.log(`Account ${values.username.toLowerCase()} (${roles.join(', ') || 'no roles'}) created in ${where}.`);
	console.log(`One-time password (shown only now; it must be changed at first sign-in):\n\n  ${created.temporaryPassword}\n`);
} catch (err) {
	console.error(isAuthError(err) ? `Not created: ${err.message}` : err instanceof Error ? err.message : err);
	process.exitCode = 1;
} finally {
	await handle.close();
}
