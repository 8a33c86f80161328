/**
 * Offline verifier of a Rimebook audit-trail export (JSONL or CSV): `npm run audit:verify-export -- FILE [--key site-key.pem]`.
 *
 * Standalone on purpose: it imports no application code except the RFC 8785 canonicaliser and the
 * RFC 9162 Merkle module, and re-implements the chain rules, so an inspector can read all of it.
 * It checks the checkpoint's Ed25519 signature, every event hash (SHA-256 of prev_hash ‖ RFC 8785
 * canonical JSON), and then either the whole chain and the Merkle root (coverage "complete") or
 * each event's inclusion proof (coverage "filtered"). It prints the first break; exit code 0 when
 * everything holds, 1 when something does not, 2 when the file cannot be read.
 *
 * The public key in the file proves only that the file is self-consistent. Compare the key id it
 * prints with the one the site publishes (GET /api/audit/public-key, or a printed checkpoint), or
 * pass the site's key with --key.
 */
import { createHash, createPublicKey, verify } from 'node:crypto';
import { readFileSync } from 'node:fs';
import Papa from 'papaparse';
import { canonicalJson } from '../src/lib/domain/canonical';
import { extendFrontier, frontierRoot, fromHex, leafHash, toHex, verifyInclusion, type Digest } from '../src/lib/domain/merkle';

const sha256: Digest = (d) => createHash('sha256').update(d).digest();
const GENESIS = '0'.repeat(64);

interface Checkpoint {
	size: number;
	root: string;
	head: { seq: number; hash: string };
	at: string;
	keyId: string;
	statement: string;
	signature: string;
}
interface Header {
	type: string;
	version: number;
	coverage: 'complete' | 'filtered';
	checkpoint: Checkpoint;
	publicKey: { keyId: string; spkiPem: string };
	site?: string;
	filter?: unknown;
}
interface Line {
	seq: number;
	prevHash: string;
	hash: string;
	canonical: string;
	proof?: string[];
}
type Kind = 'changed' | 'missing' | 'inserted' | 'reordered';

function fail(message: string, code = 1): never {
	console.error(`FAIL: ${message}`);
	process.exit(code);
}

function readExport(file: string): { header: Header; lines: Line[]; trailerCount: number | null } {
	let text: string;
	try {
		text = readFileSync(file, 'utf8');
	} catch (err) {
		fail(`cannot read ${file}: ${(err as Error).message}`, 2);
	}
	const first = text.slice(0, text.indexOf('\n'));
	if (first.startsWith('# ')) return readCsv(text);
	const rows = text.split('\n').filter((l) => l.trim() !== '');
	const parsed = rows.map((l, i) => {
		try {
			return JSON.parse(l) as Record<string, unknown>;
		} catch {
			fail(`line ${i + 1} is not JSON`, 2);
		}
	});
	const header = parsed[0] as unknown as Header;
	const end = parsed[parsed.length - 1];
	const lines = parsed
		.filter((p) => p.type === 'event')
		.map((p) => ({ seq: Number(p.seq), prevHash: String(p.prevHash), hash: String(p.hash), canonical: canonicalJson(p.event), proof: p.proof as string[] | undefined }));
	return { header, lines, trailerCount: end?.type === 'end' ? Number(end.count) : null };
}

function readCsv(text: string): { header: Header; lines: Line[]; trailerCount: number | null } {
	const comments = text.split('\n').filter((l) => l.startsWith('# '));
	const header = JSON.parse(comments[0].slice(2)) as Header;
	const end = comments.length > 1 ? (JSON.parse(comments[comments.length - 1].slice(2)) as { type: string; count: number }) : null;
	const table = Papa.parse<Record<string, string>>(text, { header: true, comments: '# ', skipEmptyLines: true });
	const lines = table.data.map((r) => {
		checkCsvColumns(r);
		return { seq: Number(r.seq), prevHash: r.prev_hash, hash: r.hash, canonical: r.canonical, proof: r.proof ? r.proof.split(' ') : undefined };
	});
	return { header, lines, trailerCount: end?.type === 'end' ? end.count : null };
}

/** The readable CSV columns must say what the hashed payload says, or a reader could be misled by an edited cell. */
function checkCsvColumns(r: Record<string, string>) {
	const e = JSON.parse(r.canonical) as Record<string, unknown>;
	// The export prefixes cells starting with = + - @ with ' against spreadsheet formula injection.
	const cell = (v: string) => (/^'[=+\-@\t\r]/.test(v) ? v.slice(1) : v);
	const text = (v: unknown) => (v === null || v === undefined ? '' : String(v));
	const jsonCell = (v: string) => (v === '' ? 'null' : canonicalJson(JSON.parse(v)));
	const same =
		cell(r.seq) === text(e.seq) &&
		cell(r.at_utc) === text(e.at) &&
		cell(r.actor_id) === text(e.actorId) &&
		cell(r.actor_name) === text(e.actorName) &&
		cell(r.action) === text(e.action) &&
		cell(r.entity_type) === text(e.entityType) &&
		cell(r.entity_id) === text(e.entityId) &&
		cell(r.batch_id) === text(e.batchId) &&
		cell(r.reason) === text(e.reason) &&
		jsonCell(cell(r.before)) === canonicalJson(e.before ?? null) &&
		jsonCell(cell(r.after)) === canonicalJson(e.after ?? null);
	if (!same) fail(`first break at seq ${r.seq}: changed (a readable column differs from the hashed payload)`);
}

function checkSignature(cp: Checkpoint, pem: string): string | null {
	const der = createPublicKey(pem).export({ type: 'spki', format: 'der' });
	const keyId = createHash('sha256').update(der).digest('hex').slice(0, 32);
	if (keyId !== cp.keyId) return `the checkpoint names key ${cp.keyId}, the public key is ${keyId}`;
	const stated = JSON.parse(cp.statement) as Partial<Checkpoint> & { type?: string };
	if (stated.type !== 'rimebook.audit.tree-head' || stated.size !== cp.size || stated.root !== cp.root || stated.head?.hash !== cp.head.hash || stated.keyId !== cp.keyId)
		return 'the checkpoint fields differ from its signed statement';
	if (!verify(null, Buffer.from(cp.statement, 'utf8'), createPublicKey(pem), Buffer.from(cp.signature, 'base64'))) return 'the Ed25519 signature does not verify';
	return null;
}

const payloadSeq = (canonical: string) => {
	const m = /,"seq":([1-9][0-9]*)\}$/.exec(canonical);
	return m ? Number(m[1]) : NaN;
};
const intact = (l: Line) => createHash('sha256').update(l.prevHash).update(l.canonical).digest('hex') === l.hash;

/** The chain rules of Rimebook's verifyChain, restated: the first break of a complete export. */
function firstBreak(lines: Line[]): { seq: number; kind: Kind } | null {
	let last = GENESIS;
	for (let i = 0; i < lines.length; i++) {
		const s = i + 1;
		const l = lines[i];
		const next = lines[i + 1] ?? null;
		if (l.seq !== s) return l.seq > s ? { seq: s, kind: 'missing' } : { seq: l.seq, kind: 'inserted' };
		const p = payloadSeq(l.canonical);
		if (p === s && l.prevHash === last && intact(l)) {
			last = l.hash;
			continue;
		}
		if (p > s) return next === null || payloadSeq(next.canonical) === p + 1 ? { seq: s, kind: 'missing' } : { seq: s, kind: 'reordered' };
		if (p < s) return { seq: p, kind: 'inserted' };
		if (!intact(l)) return next && payloadSeq(next.canonical) === s && next.prevHash === last ? { seq: s, kind: 'inserted' } : { seq: s, kind: 'changed' };
		return { seq: Math.max(1, s - 1), kind: 'changed' };
	}
	return null;
}

function main() {
	const args = process.argv.slice(2);
	const file = args.find((a) => !a.startsWith('--'));
	const keyAt = args.indexOf('--key');
	if (!file) fail('usage: npm run audit:verify-export -- FILE [--key site-public-key.pem]', 2);
	const { header, lines, trailerCount } = readExport(file);
	if (header?.type !== 'rimebook.audit-export' || header.version !== 1) fail('not a Rimebook audit export (version 1)', 2);
	const cp = header.checkpoint;
	const pem = keyAt >= 0 ? readFileSync(args[keyAt + 1], 'utf8') : header.publicKey.spkiPem;
	console.log(`Export of ${header.site ?? 'a Rimebook site'}: ${lines.length} events, coverage ${header.coverage}`);
	console.log(`Checkpoint: size ${cp.size}, root ${cp.root}, at ${cp.at}, key ${cp.keyId}${keyAt >= 0 ? ' (checked against --key)' : ' (key taken from the file: compare its id with the site\'s published key)'}`);
	const signatureProblem = checkSignature(cp, pem);
	if (signatureProblem) fail(`checkpoint signature: ${signatureProblem}`);
	if (trailerCount === null) fail('the file has no end line: it was cut short');
	if (trailerCount !== lines.length) fail(`the end line counts ${trailerCount} events, the file holds ${lines.length}`);

	if (header.coverage === 'complete') {
		const broken = firstBreak(lines);
		if (broken) fail(`first break at seq ${broken.seq}: ${broken.kind}`);
		if (lines.length !== cp.size) fail(`first break at seq ${lines.length + 1}: missing (the checkpoint covers ${cp.size} events)`);
		if ((lines[lines.length - 1]?.hash ?? GENESIS) !== cp.head.hash) fail(`first break at seq ${cp.size}: changed (the head differs from the signed head)`);
		const frontier = extendFrontier(sha256, { size: 0, peaks: [] }, lines.map((l) => leafHash(sha256, fromHex(l.hash))));
		if (toHex(frontierRoot(sha256, frontier.peaks)) !== cp.root) fail('the Merkle root of the events differs from the signed root');
		console.log(`OK: all ${lines.length} events verified; chain, head and Merkle root match the signed checkpoint.`);
		return;
	}
	const root = fromHex(cp.root);
	let previous: Line | null = null;
	for (const l of lines) {
		if (payloadSeq(l.canonical) !== l.seq) fail(`first break at seq ${l.seq}: reordered (its payload is event ${payloadSeq(l.canonical)})`);
		if (!intact(l)) fail(`first break at seq ${l.seq}: changed (its hash does not match its content)`);
		if (previous && l.seq <= previous.seq) fail(`first break at seq ${l.seq}: reordered (out of order)`);
		if (previous && l.seq === previous.seq + 1 && l.prevHash !== previous.hash) fail(`first break at seq ${l.seq}: changed (does not link to seq ${previous.seq})`);
		if (!l.proof || !verifyInclusion(sha256, l.seq - 1, cp.size, leafHash(sha256, fromHex(l.hash)), l.proof.map(fromHex), root))
			fail(`first break at seq ${l.seq}: changed (its inclusion proof does not lead to the signed root)`);
		previous = l;
	}
	console.log(`OK: all ${lines.length} events are authentic and in the signed checkpoint of size ${cp.size}.`);
	console.log('Note: a filtered export proves each event listed, not that no matching event was left out.');
}

main();
