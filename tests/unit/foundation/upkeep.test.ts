import { describe, expect, it } from 'vitest';
import { ANALYZE_BASE_ROWS, ANALYZE_SCALE, isTableDue } from '$lib/server/db/upkeep';

// The rule is autovacuum's analyze threshold, PostgreSQL 15 documentation 25.1.6 "The Autovacuum
// Daemon": analyze threshold = analyze base threshold + analyze scale factor × number of tuples,
// with the defaults of 20.10 (autovacuum_analyze_threshold = 50, autovacuum_analyze_scale_factor =
// 0.1; values from memory). Rows now are estimated as the planner does (documentation 76.1 "Row
// Estimation Examples": reltuples scaled by current pages / relpages). The cases below are worked
// from that formula.
describe('upkeep: when a PGlite table is due for VACUUM (ANALYZE)', () => {
	it('uses the documented defaults', () => {
		expect(ANALYZE_BASE_ROWS).toBe(50);
		expect(ANALYZE_SCALE).toBe(0.1);
	});

	it('an empty table is never due; a table never analysed is due once it has a page', () => {
		expect(isTableDue({ table: 't', pages: 0, relpages: 0, reltuples: -1 })).toBe(false);
		expect(isTableDue({ table: 't', pages: 1, relpages: 0, reltuples: -1 })).toBe(true);
		// Analysed while empty (relpages 0): any page now is new.
		expect(isTableDue({ table: 't', pages: 1, relpages: 0, reltuples: 0 })).toBe(true);
	});

	it('1,000 rows on 10 pages: due past 50 + 0.1 × 1,000 = 150 new rows (1.5 pages), not before', () => {
		const t = { table: 't', relpages: 10, reltuples: 1000 };
		expect(isTableDue({ ...t, pages: 10 })).toBe(false);
		expect(isTableDue({ ...t, pages: 11 })).toBe(false); // about 100 new rows
		expect(isTableDue({ ...t, pages: 12 })).toBe(true); // about 200 new rows
	});

	it('a ledger of 1,000,000 events on 90,000 pages is due past 100,050 new events', () => {
		const t = { table: 'audit_event', relpages: 90_000, reltuples: 1_000_000 };
		// 100,050 rows are 9,004.5 pages at 111.1 rows a page.
		expect(isTableDue({ ...t, pages: 99_004 })).toBe(false);
		expect(isTableDue({ ...t, pages: 99_005 })).toBe(true);
	});

	it('a table that shrank or stayed the same is not due', () => {
		expect(isTableDue({ table: 't', pages: 5, relpages: 10, reltuples: 1000 })).toBe(false);
	});
});
