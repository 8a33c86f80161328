/**
 * The lifecycle of a deviation (21 CFR 211.192, 211.100(b); issue 8):
 *
 *   open → investigating → pending-qa-approval → closed
 *              ↖──────── (QA sends back) ──┘
 *   open | investigating | pending-qa-approval → cancelled (with a reason)
 *
 * Pure rules, shared by the server (which enforces them inside its transaction) and the pages
 * (which offer only the actions allowed). 21 CFR 11.10(f): the permitted sequence of steps is
 * enforced; 11.10(g): authority checks; 211.192: a discrepancy is investigated, the
 * investigation and its conclusions written down, before the deviation is closed.
 */
import type { Permission } from './permissions';
import type { SignatureMeaning } from './signature';

export const deviationStatuses = ['open', 'investigating', 'pending-qa-approval', 'closed', 'cancelled'] as const;
export type DeviationStatus = (typeof deviationStatuses)[number];
export const deviationClassifications = ['minor', 'major', 'critical'] as const;
export type DeviationClassification = (typeof deviationClassifications)[number];

/** Signed transitions, plus `edit` (field changes: audited, not signed). */
export const deviationActions = ['edit', 'start-investigation', 'submit', 'send-back', 'close', 'cancel'] as const;
export type DeviationAction = (typeof deviationActions)[number];
export type DeviationTransition = Exclude<DeviationAction, 'edit'>;

export interface DeviationRule {
	from: readonly DeviationStatus[];
	/** The state after the action; null: the state does not change. */
	to: DeviationStatus | null;
	permission: Permission;
	/** The signature the action needs (11.50, 11.70); null for field edits. */
	meaning: SignatureMeaning | null;
	/** A reason is recorded with the action (Annex 11, 9: the reason for a change). */
	needsReason: boolean;
}

export const deviationLifecycle: Record<DeviationAction, DeviationRule> = {
	// Field edits before submission; after it the record under approval never changes (a send-back reopens it).
	edit: { from: ['open', 'investigating'], to: null, permission: 'deviation.raise', meaning: null, needsReason: false },
	// Whoever starts the investigation attests they reviewed the event as raised.
	'start-investigation': { from: ['open'], to: 'investigating', permission: 'deviation.raise', meaning: 'reviewed', needsReason: false },
	// The investigator signs as author of the investigation, root cause and impact.
	submit: { from: ['investigating'], to: 'pending-qa-approval', permission: 'deviation.raise', meaning: 'authored', needsReason: false },
	// QA sends an investigation back for more work, saying why.
	'send-back': { from: ['pending-qa-approval'], to: 'investigating', permission: 'deviation.approve', meaning: 'reviewed', needsReason: true },
	// 211.192: QA approves the investigation and its conclusions.
	close: { from: ['pending-qa-approval'], to: 'closed', permission: 'deviation.approve', meaning: 'approved', needsReason: false },
	cancel: { from: ['open', 'investigating', 'pending-qa-approval'], to: 'cancelled', permission: 'deviation.approve', meaning: 'cancelled', needsReason: true }
};

/** What submission (and closure) needs written down (211.192: investigation, conclusions, extent). */
export const requiredForSubmission = ['classification', 'investigation', 'rootCause', 'impact'] as const;
export type RequiredField = (typeof requiredForSubmission)[number];

/** The facts of a deviation the rules look at. */
export interface DeviationFacts {
	status: DeviationStatus;
	classification: string | null;
	investigation: string | null;
	rootCause: string | null;
	impact: string | null;
	/** Who submitted the investigation now pending approval (null before a submission). */
	submittedBy: string | null;
	/**
	 * Everyone who wrote or submitted the investigation, over every round (listInvestigators):
	 * after a send-back and a new submission by someone else, the first investigator is still not
	 * independent of the findings. Omitted, only `submittedBy` counts.
	 */
	investigators?: readonly string[];
}

/** One audit event of a deviation, as listInvestigators reads it. */
export interface DeviationEventFacts {
	actorId: string | null;
	action: string;
	after: unknown;
}

/** The fields that hold the investigation's findings (an edit of any of them is investigative work). */
const findingFields: readonly string[] = requiredForSubmission;

/**
 * The people who took part in the investigation, from the deviation's own audit events: each
 * submitter (deviation.submit), each person whose edit changed a finding (classification,
 * investigation, root cause or impact; deviation.edit records the changed fields in `after`, a
 * cleared one as null), and whoever raised it with a finding already given (a manual raise may
 * set the classification; deviation.raise records every field, unset ones as null). Raising
 * without findings, or editing the title, is reporting, not investigating.
 */
export function listInvestigators(events: readonly DeviationEventFacts[]): string[] {
	const people = new Set<string>();
	for (const e of events) {
		if (e.actorId === null) continue;
		const after = e.after !== null && typeof e.after === 'object' ? (e.after as Record<string, unknown>) : {};
		const edited = e.action === 'deviation.edit' && findingFields.some((k) => k in after);
		const raisedWithFindings = e.action === 'deviation.raise' && findingFields.some((k) => after[k] !== null && after[k] !== undefined);
		if (e.action === 'deviation.submit' || edited || raisedWithFindings) people.add(e.actorId);
	}
	return [...people];
}

export interface Actor {
	id: string | null;
	permissions: readonly Permission[];
}

export type DeviationRefusal =
	/** The person's roles do not allow the action (403). */
	| 'not-permitted'
	/** The deviation's state does not allow it now (409). */
	| 'wrong-state'
	/** Investigation, root cause, impact or classification missing (422). */
	| 'incomplete'
	/** The action needs a reason and none was given (422). */
	| 'reason-required'
	/** The person submitted or wrote (part of) the investigation and may not approve its closure (403). */
	| 'own-submission';

export type DeviationCheck = { ok: true } | { ok: false; reason: DeviationRefusal; missing?: RequiredField[] };

function blank(v: string | null | undefined): boolean {
	return v === null || v === undefined || v.trim() === '';
}

/** The fields still empty that submission needs, in form order. */
export function listMissingForSubmission(d: Pick<DeviationFacts, RequiredField>): RequiredField[] {
	return requiredForSubmission.filter((f) => blank(d[f]));
}

/**
 * Whether `action` may be taken on `d` by `who` now. Checks in the order a person can act on:
 * their role first (a role without it learns nothing more), then the state, then what is missing,
 * then the separation of duties.
 */
export function checkDeviationAction(action: DeviationAction, d: DeviationFacts, who: Actor, input: { reason?: string | null } = {}): DeviationCheck {
	const rule = deviationLifecycle[action];
	if (!who.permissions.includes(rule.permission)) return { ok: false, reason: 'not-permitted' };
	if (!rule.from.includes(d.status)) return { ok: false, reason: 'wrong-state' };
	if (rule.needsReason && blank(input.reason)) return { ok: false, reason: 'reason-required' };
	if (action === 'submit' || action === 'close') {
		// Closure checks again: a deviation is never closed without its investigation (211.192),
		// even if a row reached pending-qa-approval some other way.
		const missing = listMissingForSubmission(d);
		if (missing.length > 0) return { ok: false, reason: 'incomplete', missing };
	}
	// Separation of duties: whoever submitted or wrote the investigation, in any round, may not
	// approve its closure. Part 11 does not say so in words (it asks for authority checks, 11.10(g),
	// and signatures that carry their meaning, 11.50); an independent approver is common GMP
	// practice (the four-eyes principle).
	if (action === 'close' && who.id !== null && (d.submittedBy === who.id || (d.investigators ?? []).includes(who.id))) return { ok: false, reason: 'own-submission' };
	return { ok: true };
}

/** The actions a person may take now, for the page to offer (a reason is asked for by the form). */
export function listAvailableDeviationActions(d: DeviationFacts, who: Actor): DeviationAction[] {
	return deviationActions.filter((a) => {
		const r = checkDeviationAction(a, d, who, { reason: 'x' });
		// `incomplete` still shows submit/close: the person learns what is missing from the refusal.
		return r.ok || r.reason === 'incomplete';
	});
}

/** Every status change the lifecycle allows, as [from, to]. */
export const deviationStatusChanges: readonly (readonly [DeviationStatus, DeviationStatus])[] = Object.values(deviationLifecycle).flatMap((r) =>
	r.to === null ? [] : r.from.map((f) => [f, r.to!] as const)
);

/** Whether the status is final: nothing changes a closed or cancelled deviation again. */
export function isDeviationFinished(status: DeviationStatus): boolean {
	return status === 'closed' || status === 'cancelled';
}
