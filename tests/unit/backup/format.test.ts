import { describe, expect, test } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { loadOrder, type TableInfo } from '$lib/server/backup/catalog';
import { backupFileName } from '$lib/server/backup/create';
import { takenAt } from '$lib/server/backup/schedule';
import { END_OF_ARCHIVE, indexTar, padding, tarHeader } from '$lib/server/backup/tar';

const table = (name: string): TableInfo => ({ name, columns: ['id'], orderBy: ['id'], selfReferencing: false, identityAlways: false });

describe('backup format', () => {
	test('tables load after the tables they reference; a cycle is refused with its tables named', () => {
		const order = loadOrder([table('attachment'), table('blob'), table('batch'), table('user')], [
			{ child: 'attachment', parent: 'blob' },
			{ child: 'attachment', parent: 'batch' },
			{ child: 'batch', parent: 'user' },
			{ child: 'user', parent: 'user' }
		]);
		expect(order.map((t) => t.name)).toEqual(['blob', 'user', 'batch', 'attachment']);
		expect(() => loadOrder([table('a'), table('b')], [{ child: 'a', parent: 'b' }, { child: 'b', parent: 'a' }])).toThrow(/cycle.*a, b/);
	});

	test('the archive is POSIX ustar as GNU tar reads it, and a cut file is refused', async () => {
		// GNU tar as the reference reader (IEEE Std 1003.1-2008, pax/ustar interchange format).
		const dir = mkdtempSync(join(tmpdir(), 'rimebook-tar-'));
		try {
			const file = join(dir, 'x.tar');
			const a = Buffer.from('invented part\n');
			const b = Buffer.alloc(1000, 7);
			writeFileSync(file, Buffer.concat([tarHeader('db/a.jsonl.gz', a.length, new Date(0)), a, padding(a.length), tarHeader('blobs/b', b.length, new Date(0)), b, padding(b.length), END_OF_ARCHIVE]));
			const listing = execFileSync('tar', ['-tvf', file], { encoding: 'utf8' }).trim().split('\n');
			expect(listing.map((l) => l.split(/\s+/).slice(2, 3).concat(l.split(/\s+/).at(-1)!))).toEqual([['14', 'db/a.jsonl.gz'], ['1000', 'blobs/b']]);
			expect((await indexTar(file)).map((e) => [e.name, e.offset, e.size])).toEqual([['db/a.jsonl.gz', 512, 14], ['blobs/b', 1536, 1000]]);
			writeFileSync(file, Buffer.concat([tarHeader('blobs/b', b.length, new Date(0)), b.subarray(0, 600)]));
			await expect(indexTar(file)).rejects.toThrow(/truncated: part blobs\/b needs 1000 bytes/);
		} finally {
			rmSync(dir, { recursive: true, force: true });
		}
	});

	test('a file name carries the UTC time it was taken', () => {
		const at = new Date('2026-12-02T00:41:26.123Z');
		expect(backupFileName(at)).toBe('rimebook-backup-20261202T004126123Z.tar');
		expect(takenAt(backupFileName(at))).toBe(at.getTime());
		expect(takenAt('other.tar')).toBeNaN();
	});
});
