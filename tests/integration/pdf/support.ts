import { mkdtempSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { spawnSync } from 'node:child_process';

/**
 * Poppler's command-line tools (Debian poppler-utils) read the files back, as a reader outside
 * Rimebook would: an independent PDF parser, text extractor and signature checker.
 */
const dir = mkdtempSync(join(tmpdir(), 'rimebook-pdf-test-'));
let n = 0;

export function saveTemp(bytes: Uint8Array, name = 'doc.pdf'): string {
	const path = join(dir, `${++n}-${name}`);
	writeFileSync(path, bytes);
	return path;
}

function run(cmd: string, args: string[]): { status: number | null; stdout: string; stderr: string } {
	const r = spawnSync(cmd, args, { encoding: 'utf8', maxBuffer: 256 * 1024 * 1024 });
	if (r.error) throw r.error;
	return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

/** The text as pdftotext extracts it (UTF-8), with runs of white space made one space. */
export function textOf(path: string): string {
	const r = run('/usr/bin/pdftotext', ['-enc', 'UTF-8', path, '-']);
	if (r.status !== 0) throw new Error(`pdftotext failed: ${r.stderr}`);
	return r.stdout.replace(/\s+/g, ' ');
}

/** The text of each page, split at form feeds (pdftotext ends every page with one). */
export function pagesOf(path: string): string[] {
	const r = run('/usr/bin/pdftotext', ['-enc', 'UTF-8', path, '-']);
	return r.stdout.split('\f').slice(0, -1).map((p) => p.replace(/\s+/g, ' '));
}

export function pageCount(path: string): number {
	const r = run('/usr/bin/pdfinfo', [path]);
	const m = /^Pages:\s+(\d+)/m.exec(r.stdout);
	if (!m) throw new Error(`pdfinfo gave no page count: ${r.stderr}`);
	return Number(m[1]);
}

export function pdfsig(path: string): string {
	const r = run('/usr/bin/pdfsig', [path]);
	return `${r.stdout}\n${r.stderr}`;
}

export function attachments(path: string): { list: string; files: { name: string; bytes: Buffer }[] } {
	const list = run('/usr/bin/pdfdetach', ['-list', path]).stdout;
	const out = mkdtempSync(join(dir, 'detach-'));
	const saved = run('/usr/bin/pdfdetach', ['-saveall', '-o', out, path]);
	if (saved.status !== 0) throw new Error(`pdfdetach failed: ${saved.stderr}`);
	return { list, files: readdirSync(out).map((name) => ({ name, bytes: readFileSync(join(out, name)) })) };
}

/** The /ByteRange of the (first) signature: [offset1, length1, offset2, length2]. */
export function byteRangeOf(bytes: Uint8Array): number[] {
	const text = Buffer.from(bytes).toString('latin1');
	const m = /\/ByteRange\s*\[\s*(\d+)\s+(\d+)\s+(\d+)\s+(\d+)\s*\]/.exec(text);
	if (!m) throw new Error('no ByteRange');
	return m.slice(1).map(Number);
}
