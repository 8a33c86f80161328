import { describe, expect, test } from 'vitest';
import { exampleBatchNumber, nextBatchNumber, parseNumberPattern, productPrefix } from '$lib/domain/batch-number';
import { checkTransition, listAvailableActions } from '$lib/domain/master-lifecycle';
import { permissionsOf } from '$lib/domain/permissions';

// No standard prescribes a batch number format: 21 CFR 211.188 and EU GMP Chapter 4 ask only for a
// distinctive number per batch. These are invented site formats; the expected numbers follow from
// the pattern rules in $lib/domain/batch-number by hand.
describe('batch numbers (site format)', () => {
	const ctx = { productCode: 'TAV-020-LY', year: 2026 };
	test('the default: product prefix, year, four-digit sequence per product and year', () => {
		expect(productPrefix('TAV-020-LY')).toBe('TAV');
		expect(nextBatchNumber('{product}-{yyyy}-{seq:4}', ctx, [])).toBe('TAV-2026-0001');
		expect(nextBatchNumber('{product}-{yyyy}-{seq:4}', ctx, ['TAV-2026-0001', 'TAV-2026-0007', 'TAV-2025-0042', 'OTH-2026-0099'])).toBe('TAV-2026-0008');
		// A new year restarts the count.
		expect(nextBatchNumber('{product}-{yyyy}-{seq:4}', { ...ctx, year: 2027 }, ['TAV-2026-0008'])).toBe('TAV-2027-0001');
	});
	test('other formats: two-digit year, suffixes, the whole code; a full sequence grows rather than repeats', () => {
		expect(exampleBatchNumber('L{yy}{seq:3}', ctx)).toBe('L26001');
		expect(nextBatchNumber('{code}/{seq:2}-A', ctx, ['TAV-020-LY/07-A'])).toBe('TAV-020-LY/08-A');
		expect(nextBatchNumber('B{seq:2}', ctx, ['B99'])).toBe('B100');
	});
	test('a pattern without exactly one sequence, with unknown placeholders or odd characters is refused', () => {
		expect(parseNumberPattern('{product}-{yyyy}').ok).toBe(false);
		expect(parseNumberPattern('{seq:4}{seq:2}').ok).toBe(false);
		expect(parseNumberPattern('{batch}-{seq:4}').ok).toBe(false);
		expect(parseNumberPattern('A B{seq:4}').ok).toBe(false);
		expect(parseNumberPattern('{seq:9}').ok).toBe(false);
		expect(parseNumberPattern('X-{seq:9').ok).toBe(false);
	});
});

describe('master lifecycle rules (21 CFR 211.186(a), 11.10(f), (g))', () => {
	const author = { permissions: permissionsOf(['author']), isAuthor: true };
	const qa = { permissions: permissionsOf(['qa']), isAuthor: false };
	const inspector = { permissions: permissionsOf(['inspector']), isAuthor: false };
	test('each role is offered exactly its actions per state', () => {
		expect(listAvailableActions('draft', author)).toEqual(['edit', 'submit', 'new-version']);
		expect(listAvailableActions('in-review', author)).toEqual(['return', 'new-version']);
		expect(listAvailableActions('in-review', qa)).toEqual(['return', 'approve']);
		expect(listAvailableActions('approved', qa)).toEqual(['make-effective', 'retire']);
		expect(listAvailableActions('effective', qa)).toEqual(['retire', 'issue']);
		expect(listAvailableActions('superseded', qa)).toEqual(['retire']);
		expect(listAvailableActions('retired', qa)).toEqual([]);
		for (const s of ['draft', 'in-review', 'approved', 'effective', 'superseded', 'retired'] as const) expect(listAvailableActions(s, inspector)).toEqual([]);
	});
	test('an author of the version is refused approval even with QA rights', () => {
		expect(checkTransition('approve', 'in-review', { permissions: permissionsOf(['author', 'qa']), isAuthor: true })).toEqual({ ok: false, reason: 'own-version' });
		expect(checkTransition('approve', 'in-review', { permissions: permissionsOf(['author', 'qa']), isAuthor: false })).toEqual({ ok: true });
	});
	// The lead's master.return permission (author, QA): QA, or the version's own author withdrawing it.
	test('return needs master.return, and then QA or being an author of the version', () => {
		expect(checkTransition('return', 'in-review', author)).toEqual({ ok: true });
		expect(checkTransition('return', 'in-review', qa)).toEqual({ ok: true });
		// Another author, who did not write this version, cannot send it back.
		expect(checkTransition('return', 'in-review', { ...author, isAuthor: false })).toEqual({ ok: false, reason: 'not-permitted' });
		// A token narrowed to approval only, without master.return, cannot either (11.10(g)).
		expect(checkTransition('return', 'in-review', { permissions: ['master.read', 'master.approve'], isAuthor: false })).toEqual({ ok: false, reason: 'not-permitted' });
		for (const p of [inspector, { permissions: permissionsOf(['operator', 'supervisor', 'admin']), isAuthor: true }]) expect(checkTransition('return', 'in-review', p)).toEqual({ ok: false, reason: 'not-permitted' });
	});
	test('only an effective version is issued', () => {
		for (const s of ['draft', 'in-review', 'approved', 'superseded', 'retired'] as const) expect(checkTransition('issue', s, qa)).toEqual({ ok: false, reason: 'wrong-state' });
		expect(checkTransition('issue', 'effective', qa)).toEqual({ ok: true });
	});
});
