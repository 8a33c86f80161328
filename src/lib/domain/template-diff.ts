/**
 * A readable difference between two versions of a master batch record (21 CFR 211.100(a):
 * changes are reviewed and approved; Annex 11, 10: change control). Sections, steps and fields
 * are matched by their keys, so a renamed title reads as a change, a moved step as a move, and
 * a new key as an addition; each changed property is listed with its old and new value, and the
 * Markdown instructions as a line diff. Pure: the same on the server and in the browser.
 */
import type { Field, Limits, Section, Step, Template } from '$lib/schemas/template';

export type ChangeKind = 'added' | 'removed' | 'changed' | 'moved';
export type ChangeLevel = 'header' | 'section' | 'step' | 'field';

export interface LineChange {
	op: 'same' | 'added' | 'removed';
	text: string;
}

export interface TemplateChange {
	kind: ChangeKind;
	level: ChangeLevel;
	/** Key of the section, step or field ('' for the header). */
	key: string;
	/** Where, in words: section title › step title › field label (of the newer version if it has one). */
	where: string[];
	/** The property that changed (for `changed`), e.g. `limits`, `title`, `batchSize`. */
	property?: string;
	before?: string;
	after?: string;
	/** For instructions: the lines, old and new. */
	lines?: LineChange[];
}

export interface TemplateDiff {
	changes: TemplateChange[];
	counts: Record<ChangeKind, number>;
	/** True when the content is the same (header.status and version aside). */
	same: boolean;
}

/** A value as one line of text: numbers and text as they are, objects as sorted JSON. */
export function formatValue(value: unknown): string {
	if (value === undefined) return '—';
	if (typeof value === 'string') return value === '' ? '""' : value;
	if (typeof value === 'number' || typeof value === 'boolean' || value === null) return String(value);
	return stableJson(value);
}

function stableJson(value: unknown): string {
	if (Array.isArray(value)) return `[${value.map(stableJson).join(', ')}]`;
	if (value && typeof value === 'object') {
		const entries = Object.entries(value as Record<string, unknown>).filter(([, v]) => v !== undefined);
		entries.sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
		return `{${entries.map(([k, v]) => `${k}: ${stableJson(v)}`).join(', ')}}`;
	}
	return typeof value === 'string' ? JSON.stringify(value) : String(value);
}

/** Limits in the words a reviewer reads: "5.8 … 6.2 (target 6)", "target from x ± 0.5 %". */
export function formatLimits(l: Limits | undefined, unit = ''): string {
	if (!l) return '—';
	const u = unit ? ` ${unit}` : '';
	if (l.kind === 'range') {
		const span = `${l.min ?? '–∞'} … ${l.max ?? '+∞'}${u}`;
		return l.target === undefined ? span : `${span} (target ${l.target})`;
	}
	const target = l.targetFrom !== undefined ? `target from ${l.targetFrom}` : `target ${l.target}${u}`;
	return `${target} ± ${l.tolerance}${l.relative ? ' %' : u}`;
}

function same(a: unknown, b: unknown): boolean {
	return stableJson(a) === stableJson(b);
}

/** Line diff by longest common subsequence (texts here are short: step instructions). */
export function diffLines(before: string, after: string): LineChange[] {
	const a = before === '' ? [] : before.split('\n');
	const b = after === '' ? [] : after.split('\n');
	const n = a.length;
	const m = b.length;
	const lcs: number[][] = Array.from({ length: n + 1 }, () => new Array<number>(m + 1).fill(0));
	for (let i = n - 1; i >= 0; i--) for (let j = m - 1; j >= 0; j--) lcs[i][j] = a[i] === b[j] ? lcs[i + 1][j + 1] + 1 : Math.max(lcs[i + 1][j], lcs[i][j + 1]);
	const out: LineChange[] = [];
	let i = 0;
	let j = 0;
	while (i < n && j < m) {
		if (a[i] === b[j]) {
			out.push({ op: 'same', text: a[i] });
			i++;
			j++;
		} else if (lcs[i + 1][j] >= lcs[i][j + 1]) out.push({ op: 'removed', text: a[i++] });
		else out.push({ op: 'added', text: b[j++] });
	}
	while (i < n) out.push({ op: 'removed', text: a[i++] });
	while (j < m) out.push({ op: 'added', text: b[j++] });
	return out;
}

interface Located<T> {
	item: T;
	index: number;
	parent: string;
	where: string[];
}

function indexSteps(t: Template): Map<string, Located<Step>> {
	const out = new Map<string, Located<Step>>();
	for (const s of t.sections) s.steps.forEach((st, index) => out.set(st.key, { item: st, index, parent: s.key, where: [s.title, st.title] }));
	return out;
}

function indexFields(t: Template): Map<string, Located<Field>> {
	const out = new Map<string, Located<Field>>();
	for (const s of t.sections) for (const st of s.steps) st.fields.forEach((f, index) => out.set(f.key, { item: f, index, parent: st.key, where: [s.title, st.title, f.label] }));
	return out;
}

/** Properties compared one by one, in the order a reviewer reads them. */
const HEADER_PROPS = ['productName', 'productCode', 'strength', 'dosageForm', 'batchSize', 'theoreticalYield'] as const;
const SECTION_PROPS = ['title'] as const;
const STEP_PROPS = ['title', 'instructions', 'roles', 'critical', 'mayRunOutOfOrder', 'equipment', 'materials'] as const;

function propertyText(obj: Record<string, unknown>, prop: string): string {
	if ((prop === 'limits' || prop === 'meanLimits') && obj[prop] && typeof obj[prop] === 'object' && 'kind' in (obj[prop] as object)) {
		return formatLimits(obj[prop] as Limits, typeof obj.unit === 'string' ? obj.unit : '');
	}
	return formatValue(obj[prop]);
}

function compareProps(
	before: Record<string, unknown>,
	after: Record<string, unknown>,
	props: readonly string[],
	base: Omit<TemplateChange, 'kind' | 'property' | 'before' | 'after'>,
	out: TemplateChange[]
): void {
	for (const p of props) {
		if (same(before[p], after[p])) continue;
		const change: TemplateChange = { ...base, kind: 'changed', property: p, before: propertyText(before, p), after: propertyText(after, p) };
		if (p === 'instructions') change.lines = diffLines(String(before[p] ?? ''), String(after[p] ?? ''));
		out.push(change);
	}
}

/** The difference from `before` to `after`: what a reviewer must look at, in template order. */
export function diffTemplates(before: Template, after: Template): TemplateDiff {
	const changes: TemplateChange[] = [];
	compareProps(before.header, after.header, HEADER_PROPS, { level: 'header', key: '', where: [] }, changes);
	if (before.schemaVersion !== after.schemaVersion) {
		changes.push({ kind: 'changed', level: 'header', key: '', where: [], property: 'schemaVersion', before: String(before.schemaVersion), after: String(after.schemaVersion) });
	}

	// Sections, by key.
	const oldSections = new Map<string, { s: Section; index: number }>(before.sections.map((s, index) => [s.key, { s, index }]));
	const newSectionKeys = new Set(after.sections.map((s) => s.key));
	const oldOrder = before.sections.map((s) => s.key).filter((k) => newSectionKeys.has(k));
	const newOrder = after.sections.map((s) => s.key).filter((k) => oldSections.has(k));
	after.sections.forEach((s) => {
		const old = oldSections.get(s.key);
		if (!old) {
			changes.push({ kind: 'added', level: 'section', key: s.key, where: [s.title], after: `${s.steps.length} step(s)` });
			return;
		}
		compareProps(old.s, s, SECTION_PROPS, { level: 'section', key: s.key, where: [s.title] }, changes);
		if (oldOrder.indexOf(s.key) !== newOrder.indexOf(s.key)) {
			changes.push({ kind: 'moved', level: 'section', key: s.key, where: [s.title], before: `position ${old.index + 1}`, after: `position ${after.sections.indexOf(s) + 1}` });
		}
	});
	for (const s of before.sections) if (!newSectionKeys.has(s.key)) changes.push({ kind: 'removed', level: 'section', key: s.key, where: [s.title], before: `${s.steps.length} step(s)` });

	// Steps, by key across the template (a step may move to another section).
	const oldSteps = indexSteps(before);
	const newSteps = indexSteps(after);
	for (const [key, now] of newSteps) {
		const was = oldSteps.get(key);
		if (!was) {
			changes.push({ kind: 'added', level: 'step', key, where: now.where, after: `${now.item.fields.length} field(s)` });
			continue;
		}
		const { fields: _a, ...oldShell } = was.item;
		const { fields: _b, ...newShell } = now.item;
		compareProps(oldShell, newShell, STEP_PROPS, { level: 'step', key, where: now.where }, changes);
		if (was.parent !== now.parent) changes.push({ kind: 'moved', level: 'step', key, where: now.where, before: was.where[0], after: now.where[0] });
		else if (relativeOrderChanged(oldSteps, newSteps, key)) changes.push({ kind: 'moved', level: 'step', key, where: now.where, before: `position ${was.index + 1}`, after: `position ${now.index + 1}` });
	}
	for (const [key, was] of oldSteps) if (!newSteps.has(key)) changes.push({ kind: 'removed', level: 'step', key, where: was.where, before: `${was.item.fields.length} field(s)` });

	// Fields, by key across the template.
	const oldFields = indexFields(before);
	const newFields = indexFields(after);
	for (const [key, now] of newFields) {
		const was = oldFields.get(key);
		if (!was) {
			changes.push({ kind: 'added', level: 'field', key, where: now.where, after: describeField(now.item) });
			continue;
		}
		const props = [...new Set([...Object.keys(was.item), ...Object.keys(now.item)])].filter((p) => p !== 'key');
		props.sort((a, b) => fieldPropRank(a) - fieldPropRank(b) || (a < b ? -1 : 1));
		compareProps(was.item as Record<string, unknown>, now.item as Record<string, unknown>, props, { level: 'field', key, where: now.where }, changes);
		if (was.parent !== now.parent) changes.push({ kind: 'moved', level: 'field', key, where: now.where, before: was.where[1], after: now.where[1] });
		else if (relativeOrderChanged(oldFields, newFields, key)) changes.push({ kind: 'moved', level: 'field', key, where: now.where, before: `position ${was.index + 1}`, after: `position ${now.index + 1}` });
	}
	for (const [key, was] of oldFields) if (!newFields.has(key)) changes.push({ kind: 'removed', level: 'field', key, where: was.where, before: describeField(was.item) });

	const counts: Record<ChangeKind, number> = { added: 0, removed: 0, changed: 0, moved: 0 };
	for (const c of changes) counts[c.kind] += 1;
	return { changes, counts, same: changes.length === 0 };
}

const FIELD_PROP_ORDER = ['kind', 'label', 'formula', 'unit', 'decimals', 'limits', 'meanLimits', 'required', 'help'];
function fieldPropRank(p: string): number {
	const i = FIELD_PROP_ORDER.indexOf(p);
	return i < 0 ? FIELD_PROP_ORDER.length : i;
}

/**
 * A move only when the item left the longest common order of the items both versions share in
 * that parent: moving one step past another is one move, not a move of every step after it.
 */
function relativeOrderChanged<T>(before: Map<string, Located<T>>, after: Map<string, Located<T>>, key: string): boolean {
	const parent = after.get(key)!.parent;
	const siblings = (m: Map<string, Located<T>>, other: Map<string, Located<T>>) =>
		[...m.entries()]
			.filter(([k, v]) => v.parent === parent && other.get(k)?.parent === parent)
			.sort((x, y) => x[1].index - y[1].index)
			.map(([k]) => k);
	const moved = diffLines(siblings(before, after).join('\n'), siblings(after, before).join('\n')).filter((l) => l.op === 'added');
	return moved.some((l) => l.text === key);
}

/** One line for an added or removed field: its kind and what defines it. */
export function describeField(f: Field): string {
	switch (f.kind) {
		case 'number':
			return `number${f.unit ? ` in ${f.unit}` : ''}, limits ${formatLimits(f.limits, f.unit)}`;
		case 'calculated':
			return `calculated = ${f.formula}${f.unit ? ` in ${f.unit}` : ''}`;
		case 'repeated':
			return `${f.count} readings${f.unit ? ` in ${f.unit}` : ''}, limits ${formatLimits(f.limits, f.unit)}`;
		case 'material':
			return `material lot of ${f.itemCode}`;
		case 'equipment':
			return `equipment of class ${f.equipmentClass}`;
		case 'yield':
			return `yield in ${f.unit}`;
		default:
			return f.kind;
	}
}
