/**
 * The disposition gate: every reason a batch may not be released (or rejected) now. Pure; the
 * server runs it before the signing ceremony and again inside the unit of work under the batch's
 * row lock, so nothing that changed in between slips through. The page shows the same reasons.
 *
 * Release (21 CFR 211.192: records reviewed and every discrepancy investigated before release;
 * 211.188: the record is complete; 211.22(a): the quality unit approves or rejects; Annex 11, 15:
 * batch release by an authorised person with an electronic signature) is refused while:
 *   - the batch is not awaiting review (not all steps performed, or already disposed);
 *   - a deviation of the batch is not closed or cancelled;
 *   - a step is unsigned, or a critical step unverified;
 *   - a review item is not reviewed in its current form;
 *   - the signer performed or verified a step of this batch (segregation of duties, design.md:
 *     whoever executed steps of a batch does not release it);
 *   - the signer is not of the quality unit.
 *
 * Rejection needs fewer gates, by decision: a batch may be rejected while steps are open, items
 * unreviewed or deviations open (rejecting is how a failed batch ends; its deviations go on in
 * their own workflow). It still needs QA, a signer independent of the execution, a batch still
 * open (issued, in progress or awaiting review), and a comment saying why (211.192: the
 * conclusions are written down).
 */
export const dispositionDecisions = ['released', 'rejected'] as const;
export type DispositionDecision = (typeof dispositionDecisions)[number];

export type GateCode =
	| 'not-awaiting-review'
	| 'already-disposed'
	| 'open-deviation'
	| 'unsigned-step'
	| 'unverified-step'
	| 'unreviewed-item'
	| 'signer-performed'
	| 'signer-verified'
	| 'signer-not-qa'
	| 'comment-required';

export interface GateReason {
	code: GateCode;
	/** The clause the gate enforces, as named in the message. */
	clause: string;
	/** What the reason is about: deviation numbers, step labels, item keys, … */
	subjects: string[];
}

export interface DispositionFacts {
	decision: DispositionDecision;
	batchStatus: string;
	openDeviations: readonly { number: string; status: string }[];
	unsignedSteps: readonly string[];
	unverifiedSteps: readonly string[];
	unreviewedItems: readonly string[];
	signer: { id: string; roles: readonly string[] };
	/** Everyone who recorded an entry of the batch (in force or superseded), with the steps. */
	performers: readonly { userId: string; stepLabel: string }[];
	verifiers: readonly { userId: string; stepLabel: string }[];
	comment: string | null | undefined;
}

export interface GateResult {
	allowed: boolean;
	reasons: GateReason[];
}

const FINAL = ['released', 'rejected'];
const OPEN = ['issued', 'in-progress', 'awaiting-review'];

/** Every reason the decision is refused now (empty: allowed). */
export function checkDisposition(f: DispositionFacts): GateResult {
	const reasons: GateReason[] = [];
	const add = (code: GateCode, clause: string, subjects: readonly string[] = []) => reasons.push({ code, clause, subjects: [...subjects] });
	const release = f.decision === 'released';
	if (FINAL.includes(f.batchStatus)) add('already-disposed', '21 CFR 211.192', [f.batchStatus]);
	else if (release && f.batchStatus !== 'awaiting-review') add('not-awaiting-review', '21 CFR 211.188', [f.batchStatus]);
	else if (!release && !OPEN.includes(f.batchStatus)) add('not-awaiting-review', '21 CFR 211.188', [f.batchStatus]);
	if (!f.signer.roles.includes('qa')) add('signer-not-qa', '21 CFR 211.22(a)');
	const performed = [...new Set(f.performers.filter((p) => p.userId === f.signer.id).map((p) => p.stepLabel))];
	if (performed.length > 0) add('signer-performed', 'segregation of duties (design.md; 21 CFR 211.22(a))', performed);
	const verified = [...new Set(f.verifiers.filter((p) => p.userId === f.signer.id).map((p) => p.stepLabel))];
	if (verified.length > 0) add('signer-verified', 'segregation of duties (design.md; 21 CFR 211.22(a))', verified);
	if (release) {
		if (f.openDeviations.length > 0) add('open-deviation', '21 CFR 211.192', f.openDeviations.map((d) => d.number));
		if (f.unsignedSteps.length > 0) add('unsigned-step', '21 CFR 211.188(b)', f.unsignedSteps);
		if (f.unverifiedSteps.length > 0) add('unverified-step', '21 CFR 211.188(b)(11)', f.unverifiedSteps);
		if (f.unreviewedItems.length > 0) add('unreviewed-item', '21 CFR 211.192', f.unreviewedItems);
	} else if (!f.comment?.trim()) add('comment-required', '21 CFR 211.192');
	return { allowed: reasons.length === 0, reasons };
}
