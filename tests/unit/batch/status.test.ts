import { describe, expect, test } from 'vitest';
import { isBatchOpen, OPEN_BATCH_STATUSES } from '$lib/domain/batch/status';
import { batchStatus } from '$lib/server/db/tables/batches';

describe('open batch statuses', () => {
	// 21 CFR 211.188: the record is completed while the batch is made; released or rejected closes it (design.md, batch lifecycle).
	test('issued, in progress and awaiting review take records; released and rejected do not', () => {
		expect([...OPEN_BATCH_STATUSES]).toEqual(['issued', 'in-progress', 'awaiting-review']);
		expect(batchStatus.filter(isBatchOpen)).toEqual(['issued', 'in-progress', 'awaiting-review']);
		expect(isBatchOpen('released')).toBe(false);
		expect(isBatchOpen('rejected')).toBe(false);
		expect(isBatchOpen('')).toBe(false);
	});

	test('every open status is a status the batch table allows', () => {
		for (const s of OPEN_BATCH_STATUSES) expect(batchStatus).toContain(s);
	});
});
