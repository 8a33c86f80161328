/**
 * Where an executed batch record stands: each step's state, the progress, what comes next, and
 * whether a step may be performed now (21 CFR 11.10(f): the permitted sequence of steps). Pure.
 *
 * Step states (design.md, "Look and words"): not started; in progress (work begun, e.g. files
 * attached, not yet signed); performed (signed "performed"; a critical step waits for its
 * verification); verified (a critical step checked by a second person); needs attention (a value
 * out of limits, or a deviation of the step not yet closed by QA).
 */
import type { Step, Template } from '$lib/schemas/template';

export const stepStates = ['not-started', 'in-progress', 'performed', 'verified', 'needs-attention'] as const;
export type StepState = (typeof stepStates)[number];

export interface EntryFacts {
	id: string;
	stepKey: string;
	supersedes: string | null;
	performedBy: string;
	recordedAt: string;
	outOfLimits: readonly string[];
}
export interface VerificationFacts {
	entryId: string;
	verifiedBy: string;
}
export interface DeviationFacts {
	stepKey: string | null;
	status: string;
}

export interface StepProgress<E extends EntryFacts = EntryFacts, V extends VerificationFacts = VerificationFacts> {
	key: string;
	sectionKey: string;
	/** 1-based position as people say it: 2.3 = section 2, step 3. */
	label: string;
	critical: boolean;
	mayRunOutOfOrder: boolean;
	state: StepState;
	/** The entry in force (the latest, superseding all earlier ones), or null. */
	current: E | null;
	/** Every entry of the step, oldest first; all but `current` are superseded. */
	history: E[];
	verification: V | null;
	/** Performed, and verified if critical: the step counts as done. */
	done: boolean;
	openDeviations: number;
	/** Earlier steps that must be performed first (empty: the step may be performed now). */
	waitingFor: string[];
}

export interface BatchProgress<E extends EntryFacts = EntryFacts, V extends VerificationFacts = VerificationFacts> {
	steps: StepProgress<E, V>[];
	done: number;
	total: number;
	percent: number;
	/** The first step not done in template order that may be worked on now, or null. */
	next: string | null;
	complete: boolean;
}

const CLOSED_DEVIATION = ['closed', 'cancelled'];

/** Orders a step's entries as a chain: the first entry, then each one superseding the previous. */
export function chainOf<E extends EntryFacts>(entries: readonly E[]): E[] {
	const bySupersedes = new Map(entries.filter((e) => e.supersedes).map((e) => [e.supersedes as string, e]));
	const first = entries.find((e) => !e.supersedes);
	const chain: E[] = [];
	for (let e = first; e; e = bySupersedes.get(e.id)) chain.push(e);
	return chain;
}

export function orderedSteps(template: Template): { step: Step; sectionKey: string; label: string }[] {
	return template.sections.flatMap((s, i) => s.steps.map((step, j) => ({ step, sectionKey: s.key, label: `${i + 1}.${j + 1}` })));
}

export function computeProgress<E extends EntryFacts, V extends VerificationFacts>(
	template: Template,
	records: { entries: readonly E[]; verifications: readonly V[]; deviations: readonly DeviationFacts[]; attachmentSteps?: ReadonlySet<string> }
): BatchProgress<E, V> {
	const byStep = new Map<string, E[]>();
	for (const e of records.entries) byStep.set(e.stepKey, [...(byStep.get(e.stepKey) ?? []), e]);
	const verificationOf = new Map(records.verifications.map((v) => [v.entryId, v]));
	const steps: StepProgress<E, V>[] = [];
	const notPerformed: string[] = [];
	for (const { step, sectionKey, label } of orderedSteps(template)) {
		const history = chainOf(byStep.get(step.key) ?? []);
		const current = history.at(-1) ?? null;
		const verification = current ? (verificationOf.get(current.id) ?? null) : null;
		const openDeviations = records.deviations.filter((d) => d.stepKey === step.key && !CLOSED_DEVIATION.includes(d.status)).length;
		const done = current !== null && (!step.critical || verification !== null);
		let state: StepState;
		// An out-of-limit value raises a deviation; the step needs attention until QA closes it.
		if (openDeviations > 0) state = 'needs-attention';
		else if (current && verification) state = 'verified';
		else if (current) state = 'performed';
		else if (records.attachmentSteps?.has(step.key)) state = 'in-progress';
		else state = 'not-started';
		// 11.10(f): without mayRunOutOfOrder a step waits for every earlier step to be performed.
		const waitingFor = step.mayRunOutOfOrder ? [] : [...notPerformed];
		if (!current) notPerformed.push(step.key);
		steps.push({ key: step.key, sectionKey, label, critical: step.critical, mayRunOutOfOrder: step.mayRunOutOfOrder, state, current, history, verification, done, openDeviations, waitingFor });
	}
	const done = steps.filter((s) => s.done).length;
	const next = steps.find((s) => !s.current && s.waitingFor.length === 0)?.key ?? steps.find((s) => !s.done)?.key ?? null;
	return { steps, done, total: steps.length, percent: steps.length ? Math.round((done / steps.length) * 100) : 0, next, complete: done === steps.length };
}
