import { createReadStream } from 'node:fs';
import { open, stat, type FileHandle } from 'node:fs/promises';
import { BackupRefusedError } from './errors';

/**
 * The backup file is one POSIX ustar archive (IEEE Std 1003.1-2008, "pax" — the ustar interchange
 * format), uncompressed, so any `tar -tvf` lists it and `tar -xf` unpacks it for inspection without
 * Rimebook. Only regular files; sizes beyond the 11 octal digits of ustar (8 GiB) use the
 * base-256 form GNU tar and libarchive read. The reader indexes entries without reading their
 * data and refuses a damaged header or a file that ends early (truncated).
 */
const BLOCK = 512;

export interface TarEntry {
	name: string;
	/** Byte offset of the entry's data in the file. */
	offset: number;
	size: number;
}

function writeString(header: Buffer, value: string, offset: number, length: number) {
	const bytes = Buffer.from(value, 'utf8');
	if (bytes.length > length) throw new Error(`A tar field is too long: ${value}`);
	bytes.copy(header, offset);
}

function writeOctal(header: Buffer, value: number, offset: number, length: number) {
	const text = value.toString(8).padStart(length - 1, '0');
	if (text.length > length - 1) {
		// GNU base-256: high bit of the first byte set, then the value big-endian.
		let v = BigInt(value);
		for (let i = offset + length - 1; i > offset; i--) {
			header[i] = Number(v & 0xffn);
			v >>= 8n;
		}
		header[offset] = 0x80;
		return;
	}
	writeString(header, `${text}\0`, offset, length);
}

/** A ustar header for a regular file (mode 0644, owner 0, the given mtime). */
export function tarHeader(name: string, size: number, mtime: Date): Buffer {
	if (Buffer.byteLength(name) > 100) throw new Error(`A backup part name is longer than 100 bytes: ${name}`);
	const h = Buffer.alloc(BLOCK);
	writeString(h, name, 0, 100);
	writeOctal(h, 0o644, 100, 8);
	writeOctal(h, 0, 108, 8);
	writeOctal(h, 0, 116, 8);
	writeOctal(h, size, 124, 12);
	writeOctal(h, Math.floor(mtime.getTime() / 1000), 136, 12);
	h.fill(0x20, 148, 156); // checksum is computed with its own field as spaces
	h[156] = 0x30; // '0': regular file
	writeString(h, 'ustar\0', 257, 6);
	writeString(h, '00', 263, 2);
	writeString(h, 'rimebook', 265, 32);
	writeString(h, 'rimebook', 297, 32);
	let sum = 0;
	for (const b of h) sum += b;
	writeString(h, `${sum.toString(8).padStart(6, '0')}\0 `, 148, 8);
	return h;
}

export function padding(size: number): Buffer {
	const rest = size % BLOCK;
	return Buffer.alloc(rest === 0 ? 0 : BLOCK - rest);
}

/** Two zero blocks end a tar archive. */
export const END_OF_ARCHIVE = Buffer.alloc(BLOCK * 2);

function readNumber(h: Buffer, offset: number, length: number): number {
	if (h[offset] & 0x80) {
		let v = 0n;
		for (let i = offset + 1; i < offset + length; i++) v = (v << 8n) | BigInt(h[i]);
		return Number(v);
	}
	const text = h.subarray(offset, offset + length).toString('latin1').replace(/\0.*$/s, '').trim();
	if (!/^[0-7]*$/.test(text)) return Number.NaN;
	return text === '' ? 0 : parseInt(text, 8);
}

function headerChecksumOk(h: Buffer): boolean {
	const stored = readNumber(h, 148, 8);
	let sum = 0;
	for (let i = 0; i < BLOCK; i++) sum += i >= 148 && i < 156 ? 0x20 : h[i];
	return stored === sum;
}

/** Lists the entries of a backup file; refuses a file that is not a complete ustar archive. */
export async function indexTar(file: string): Promise<TarEntry[]> {
	const { size: fileSize } = await stat(file);
	const fh = await open(file, 'r');
	try {
		return await indexOpen(fh, fileSize);
	} finally {
		await fh.close();
	}
}

async function indexOpen(fh: FileHandle, fileSize: number): Promise<TarEntry[]> {
	const entries: TarEntry[] = [];
	const header = Buffer.alloc(BLOCK);
	let at = 0;
	for (;;) {
		if (at + BLOCK > fileSize) {
			throw new BackupRefusedError('file', 'truncated', `The backup file is truncated: it ends at byte ${fileSize} before the end-of-archive marker (after ${entries.length} complete parts).`);
		}
		await fh.read(header, 0, BLOCK, at);
		if (header.every((b) => b === 0)) {
			if (at + 2 * BLOCK > fileSize) throw new BackupRefusedError('file', 'truncated', `The backup file is truncated: its end-of-archive marker is cut off at byte ${fileSize}.`);
			return entries;
		}
		if (!headerChecksumOk(header) || header.subarray(257, 262).toString('latin1') !== 'ustar') {
			throw new BackupRefusedError('file', 'damaged', `The backup file is damaged: the tar header at byte ${at} fails its checksum (after ${entries.length} complete parts).`);
		}
		const name = header.subarray(0, 100).toString('utf8').replace(/\0.*$/s, '');
		const size = readNumber(header, 124, 12);
		const type = String.fromCharCode(header[156] || 0x30);
		if (!Number.isSafeInteger(size) || size < 0) throw new BackupRefusedError(name, 'damaged', `The backup file is damaged: part ${name} has no readable size.`);
		const offset = at + BLOCK;
		if (offset + size > fileSize) {
			throw new BackupRefusedError(name, 'truncated', `The backup file is truncated: part ${name} needs ${size} bytes from byte ${offset}, but the file ends at byte ${fileSize}.`);
		}
		if (type !== '0') throw new BackupRefusedError(name, 'unexpected', `The backup file holds ${name}, which is not a regular file (tar type ${type}).`);
		entries.push({ name, offset, size });
		at = offset + size + padding(size).length;
	}
}

/** The bytes of one entry, whole (manifest, blobs). */
export async function readEntry(file: string, entry: TarEntry): Promise<Buffer> {
	const fh = await open(file, 'r');
	try {
		const out = Buffer.alloc(entry.size);
		let done = 0;
		while (done < entry.size) {
			const { bytesRead } = await fh.read(out, done, entry.size - done, entry.offset + done);
			if (bytesRead === 0) throw new BackupRefusedError(entry.name, 'truncated', `Part ${entry.name} ends early.`);
			done += bytesRead;
		}
		return out;
	} finally {
		await fh.close();
	}
}

/** A stream of one entry's data (table parts, which may be large). */
export function streamEntry(file: string, entry: TarEntry) {
	return createReadStream(file, { start: entry.offset, end: entry.offset + entry.size - 1, highWaterMark: 1 << 20 });
}
