/**
 * `npm run audit:verify [-- --engine=app|database] [--roots]`: verifies this site's audit ledger
 * from the command line, opening the database as the app does (RIMEBOOK_DATA_DIR or DATABASE_URL).
 * The default engine is 'app' (every SHA-256 recomputed here with node:crypto, trusting only the
 * bytes read). Prints the report; exit code 0 when the chain holds, 1 at a break, 2 on an error.
 */
import { getConfig } from '../src/lib/server/config';
import { openDatabase } from '../src/lib/server/db/client';
import { verifyChain } from '../src/lib/server/audit/verify';

const args = process.argv.slice(2);
const engine = args.includes('--engine=database') ? 'database' : 'app';
const config = getConfig();
const handle = openDatabase({ dataDir: config.RIMEBOOK_DATA_DIR, databaseUrl: config.DATABASE_URL });
try {
	await handle.connect();
	const started = performance.now();
	const report = await verifyChain(handle.db, {
		engine,
		roots: args.includes('--roots'),
		onProgress: (n) => process.stderr.write(`\rverified ${n.toLocaleString('en')} events…`)
	});
	process.stderr.write('\n');
	console.log(JSON.stringify(report, null, 2));
	const seconds = ((performance.now() - started) / 1000).toFixed(1);
	if (report.ok) console.log(`OK: ${report.count} events verified in ${seconds} s; head ${report.head.seq} ${report.head.hash}; ${report.checkpoints.unanchored} not yet in a signed checkpoint.`);
	else console.log(`BROKEN: first break at seq ${report.firstBreak!.seq} (${report.firstBreak!.kind}, ${report.firstBreak!.reason}).`);
	process.exitCode = report.ok ? 0 : 1;
} catch (err) {
	console.error(err instanceof Error ? err.message : err);
	process.exitCode = 2;
} finally {
	await handle.close();
}
