import { describe, expect, it } from 'vitest';
import { checkDisposition, type DispositionFacts, type GateCode } from '$lib/domain/disposition';

// Invented facts: a batch awaiting review, everything clear, QA signing who did no step.
const clear = (): DispositionFacts => ({
	decision: 'released',
	batchStatus: 'awaiting-review',
	openDeviations: [],
	unsignedSteps: [],
	unverifiedSteps: [],
	unreviewedItems: [],
	signer: { id: 'u-qa', roles: ['qa'] },
	performers: [{ userId: 'u-op', stepLabel: '1.1' }],
	verifiers: [{ userId: 'u-sup', stepLabel: '1.1' }],
	comment: null
});
const codes = (f: DispositionFacts): GateCode[] => checkDisposition(f).reasons.map((r) => r.code);

describe('the disposition gate (disposition.ts)', () => {
	it('all gates clear: release is allowed with no reasons', () => {
		expect(checkDisposition(clear())).toEqual({ allowed: true, reasons: [] });
	});

	// Each gate alone blocks release, with its code, the clause and what it is about.
	const single: [string, string, (f: DispositionFacts) => void, GateCode, string[]][] = [
		['21 CFR 211.192: an open deviation', '211.192', (f) => void (f.openDeviations = [{ number: 'DEV-2026-3', status: 'investigating' }]), 'open-deviation', ['DEV-2026-3']],
		['21 CFR 211.188(b): an unsigned step', '211.188(b)', (f) => void (f.unsignedSteps = ['4.2']), 'unsigned-step', ['4.2']],
		['21 CFR 211.188(b)(11): an unverified critical step', '211.188(b)(11)', (f) => void (f.unverifiedSteps = ['2.2']), 'unverified-step', ['2.2']],
		['21 CFR 211.192: a review item not reviewed', '211.192', (f) => void (f.unreviewedItems = ['audit-trail']), 'unreviewed-item', ['audit-trail']],
		['21 CFR 211.188: the batch is still in progress', '211.188', (f) => void (f.batchStatus = 'in-progress'), 'not-awaiting-review', ['in-progress']],
		['a batch already released', '211.192', (f) => void (f.batchStatus = 'released'), 'already-disposed', ['released']],
		['segregation of duties: the signer performed a step', '211.22(a)', (f) => void (f.performers = [...f.performers, { userId: 'u-qa', stepLabel: '3.1' }]), 'signer-performed', ['3.1']],
		['segregation of duties: the signer verified a step', '211.22(a)', (f) => void (f.verifiers = [{ userId: 'u-qa', stepLabel: '2.3' }]), 'signer-verified', ['2.3']],
		['21 CFR 211.22(a): the signer is not of the quality unit', '211.22(a)', (f) => void (f.signer = { id: 'u-sup2', roles: ['supervisor'] }), 'signer-not-qa', []]
	];
	for (const [name, clause, open, code, subjects] of single) {
		it(`release is refused for ${name} alone`, () => {
			const f = clear();
			open(f);
			const r = checkDisposition(f);
			expect(r.allowed).toBe(false);
			expect(r.reasons).toHaveLength(1);
			expect(r.reasons[0]).toMatchObject({ code, subjects });
			expect(r.reasons[0].clause).toContain(clause);
		});
	}

	it('every open gate is reported at once, not only the first', () => {
		const f = clear();
		f.openDeviations = [{ number: 'DEV-1', status: 'open' }];
		f.unreviewedItems = ['audit-trail', 'deviation:d1'];
		f.performers = [{ userId: 'u-qa', stepLabel: '1.1' }];
		expect(codes(f).sort()).toEqual(['open-deviation', 'signer-performed', 'unreviewed-item']);
	});

	// Decision documented in disposition.ts: rejection ends a failed batch, so fewer gates.
	it('rejection is allowed with open deviations, open steps and unreviewed items, but needs a comment', () => {
		const f = { ...clear(), decision: 'rejected' as const, batchStatus: 'in-progress', openDeviations: [{ number: 'DEV-1', status: 'open' }], unsignedSteps: ['5.1'], unverifiedSteps: ['2.2'], unreviewedItems: ['audit-trail'] };
		expect(codes({ ...f, comment: '  ' })).toEqual(['comment-required']);
		expect(checkDisposition({ ...f, comment: 'Bulk pH out of range, batch not recoverable (invented)' })).toEqual({ allowed: true, reasons: [] });
	});

	it('rejection still needs QA, a signer independent of the execution, and a batch not yet disposed', () => {
		const f = { ...clear(), decision: 'rejected' as const, comment: 'reason' };
		expect(codes({ ...f, signer: { id: 'u-op', roles: ['operator'] } })).toEqual(['signer-not-qa', 'signer-performed']);
		expect(codes({ ...f, batchStatus: 'rejected' })).toEqual(['already-disposed']);
		expect(codes({ ...f, batchStatus: 'issued' })).toEqual([]);
	});
});
