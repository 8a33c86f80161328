import type { IssuePath, TemplateIssue } from '$lib/domain/template';
import type { TemplateInput } from '$lib/schemas/template';
import type { Messages } from '$lib/i18n';

/** The issues whose path starts with `prefix` (those of a step, a field, a property). */
export function issuesUnder(issues: readonly TemplateIssue[], prefix: IssuePath, exact = false): TemplateIssue[] {
	return issues.filter((i) => (exact ? i.path.length === prefix.length : i.path.length >= prefix.length) && prefix.every((p, k) => i.path[k] === p));
}

/** An issue in words: the catalogue's phrase for its code, then the validator's details. */
export function describeIssue(m: Messages, issue: TemplateIssue): string {
	const phrase = m.masters.issueCodes[issue.code] ?? m.masters.otherProblem;
	return `${phrase}: ${issue.message}`;
}

/** Where an issue is, in the author's words: Dispensing › Dispense sucrose › Sucrose to dispense › formula. */
export function locateIssue(t: TemplateInput, path: IssuePath): string {
	if (path[0] !== 'sections') return path.map(String).join(' › ') || '—';
	const out: string[] = [];
	let rest: IssuePath = path.slice(2);
	const section = typeof path[1] === 'number' ? t.sections?.[path[1]] : undefined;
	if (!section) return path.map(String).join(' › ');
	out.push(section.title || section.key || `#${Number(path[1]) + 1}`);
	if (rest[0] === 'steps' && typeof rest[1] === 'number') {
		const step = section.steps?.[rest[1]];
		if (step) out.push(step.title || step.key || `#${rest[1] + 1}`);
		rest = rest.slice(2);
		if (step && rest[0] === 'fields' && typeof rest[1] === 'number') {
			const field = step.fields?.[rest[1]];
			if (field) out.push(field.label || field.key || `#${rest[1] + 1}`);
			rest = rest.slice(2);
		}
	}
	return [...out, ...rest.map((p) => (typeof p === 'number' ? `#${p + 1}` : p))].join(' › ');
}

/** Index of the step an issue belongs to, to jump there. */
export function stepOfIssue(path: IssuePath): { s: number; st: number } | null {
	return path[0] === 'sections' && typeof path[1] === 'number' && path[2] === 'steps' && typeof path[3] === 'number' ? { s: path[1], st: path[3] } : null;
}
