/**
 * The lifecycle of a master batch record version (design.md, "The whole job", step 1):
 *
 *   draft → in review → approved → effective → superseded (by the next effective version)
 *                 ↘ draft (returned)      ↘ retired           ↘ retired
 *
 * Pure rules, shared by the server (which enforces them) and the pages (which offer only the
 * actions allowed). 21 CFR 211.186(a): the master is prepared and signed by one person and
 * independently checked and signed by a second; 211.100(a): changes are drafted, reviewed and
 * approved; 11.10(f): the permitted sequence of steps is enforced; 11.10(g): authority checks.
 */
import type { Permission } from './permissions';
import type { SignatureMeaning } from './signature';
import type { TemplateStatus } from '$lib/schemas/template';

export type MasterStatus = TemplateStatus;

export const masterActions = ['edit', 'submit', 'return', 'approve', 'make-effective', 'retire', 'new-version', 'issue'] as const;
export type MasterAction = (typeof masterActions)[number];

export interface TransitionRule {
	from: readonly MasterStatus[];
	/** The state after the action; null: the version's state does not change. */
	to: MasterStatus | null;
	permission: Permission;
	/** The signature the action needs (11.50, 11.70), if any. */
	meaning: SignatureMeaning | null;
	/** A reason is recorded in the audit trail (Annex 11, 9). */
	needsReason: boolean;
}

export const lifecycle: Record<MasterAction, TransitionRule> = {
	// Only a draft's content may change; an approved version never changes.
	edit: { from: ['draft'], to: null, permission: 'master.author', meaning: null, needsReason: false },
	submit: { from: ['draft'], to: 'in-review', permission: 'master.author', meaning: 'authored', needsReason: false },
	// QA sends a version back for rework before approving it; the author may withdraw it too.
	return: { from: ['in-review'], to: 'draft', permission: 'master.return', meaning: null, needsReason: true },
	approve: { from: ['in-review'], to: 'approved', permission: 'master.approve', meaning: 'approved', needsReason: false },
	'make-effective': { from: ['approved'], to: 'effective', permission: 'master.approve', meaning: null, needsReason: false },
	retire: { from: ['approved', 'effective', 'superseded'], to: 'retired', permission: 'master.approve', meaning: null, needsReason: true },
	'new-version': { from: ['draft', 'in-review', 'approved', 'effective', 'superseded', 'retired'], to: null, permission: 'master.author', meaning: null, needsReason: false },
	// Only an effective version is issued; a superseded or retired master never is (211.186, 211.188).
	issue: { from: ['effective'], to: null, permission: 'batch.issue', meaning: 'issued', needsReason: false }
};

export type TransitionRefusal = 'wrong-state' | 'not-permitted' | 'own-version';

/**
 * Whether `action` may be taken on a version in `status` by someone holding `permissions`.
 * `isAuthor`: the person wrote or submitted this version; they may not approve it (211.186(a)).
 * `return` (master.return) is open to QA and to the version's own authors.
 */
export function checkTransition(
	action: MasterAction,
	status: MasterStatus,
	who: { permissions: readonly Permission[]; isAuthor: boolean }
): { ok: true } | { ok: false; reason: TransitionRefusal } {
	const rule = lifecycle[action];
	const has = (p: Permission) => who.permissions.includes(p);
	// `return` needs master.return, and then either QA's review right or being the version's author.
	const permitted = has(rule.permission) && (action !== 'return' || has('master.approve') || who.isAuthor);
	if (!permitted) return { ok: false, reason: 'not-permitted' };
	if (!rule.from.includes(status)) return { ok: false, reason: 'wrong-state' };
	if (action === 'approve' && who.isAuthor) return { ok: false, reason: 'own-version' };
	return { ok: true };
}

/** The actions a person may take on a version now, for the page to offer. */
export function listAvailableActions(status: MasterStatus, who: { permissions: readonly Permission[]; isAuthor: boolean }): MasterAction[] {
	return masterActions.filter((a) => checkTransition(a, status, who).ok);
}

/**
 * Every change of status the lifecycle allows, as [from, to]: each rule's from → to, plus
 * effective → superseded (make-effective supersedes the version effective until then). The
 * database enforces the same list (drizzle/0014_master_status_transitions.sql, 11.10(f)).
 */
export const statusChanges: readonly (readonly [MasterStatus, MasterStatus])[] = [
	...Object.values(lifecycle).flatMap((r) => (r.to === null ? [] : r.from.map((f) => [f, r.to!] as const))),
	['effective', 'superseded']
];
