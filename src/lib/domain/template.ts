/**
 * Master batch record templates beyond their shape: validation that names every issue with its
 * path, the order of calculations, evaluation and scaling to a batch size, and the content hash.
 *
 * 21 CFR 211.186 (master record content), 211.188 (the batch record is an accurate copy of the
 * master: issuance freezes a snapshot and its hash), 21 CFR 11.10(a) (invalid records are
 * detected), Annex 11 §5 (data from other systems — an imported template — is checked).
 */
import {
	fieldSchema,
	headerSchema,
	stepSchema,
	templateSchema,
	KEY_PATTERN,
	type Field,
	type Header,
	type Limits,
	type Step,
	type Template
} from '$lib/schemas/template';
import { canonicalJson } from './canonical';
import {
	ALLOWED_FUNCTIONS,
	PARSER_KEYWORDS,
	checkFormula,
	checkUnit,
	isSameDimension,
	isUnitName
} from './formula';
import { decimalsOf } from './limits';
import { sha256Hex } from './sha256';

export { orderCalculations, evaluateCalculations, scaleTemplate, resolveLimits, listReferences } from './scaling';
export type { Calculation, CalculationInputs, ScaledTemplate, ScaledMaterial } from './scaling';

export type IssuePath = (string | number)[];

export interface TemplateIssue {
	path: IssuePath;
	/** Stable code for the UI's message catalogue; `message` is the English text. */
	code: string;
	message: string;
}

/** Names a formula may use besides field keys: the batch's own values. */
export const RESERVED_NAMES = ['batch_size', 'theoretical_yield'] as const;

/** Kinds whose value a formula may use (a repeated measurement gives its mean). */
const REFERABLE_KINDS = new Set<Field['kind']>(['number', 'calculated', 'repeated']);

/** sections[0].steps[1].fields[2].limits.min */
export function formatPath(path: IssuePath): string {
	return path.map((p, i) => (typeof p === 'number' ? `[${p}]` : i === 0 ? p : `.${p}`)).join('');
}

// ---- the template as checked: a parsed template, or what could be salvaged from invalid input

interface CheckedField {
	field: Field | null; // null: the field did not pass the schema (its issues come from zod)
	key: string | null;
	path: IssuePath;
}
interface CheckedStep {
	shell: Omit<Step, 'fields'> | null;
	key: string | null;
	path: IssuePath;
	fields: CheckedField[];
}
interface CheckedSection {
	key: string | null;
	path: IssuePath;
	steps: CheckedStep[];
}
interface Checked {
	header: Header | null;
	sections: CheckedSection[];
}

function fromTemplate(t: Template): Checked {
	return {
		header: t.header,
		sections: t.sections.map((s, i) => ({
			key: s.key,
			path: ['sections', i],
			steps: s.steps.map((st, j) => {
				const { fields, ...shell } = st;
				const path: IssuePath = ['sections', i, 'steps', j];
				return { shell, key: st.key, path, fields: fields.map((f, k) => ({ field: f, key: f.key, path: [...path, 'fields', k] })) };
			})
		}))
	};
}

function isRecord(v: unknown): v is Record<string, unknown> {
	return typeof v === 'object' && v !== null && !Array.isArray(v);
}
function arrayOf(v: unknown): unknown[] {
	return Array.isArray(v) ? v : [];
}
function rawKey(v: unknown): string | null {
	return isRecord(v) && typeof v.key === 'string' && KEY_PATTERN.test(v.key) ? v.key : null;
}

const stepShellSchema = stepSchema.omit({ fields: true });

/** The parts of an invalid template that pass their own schema, so their issues are named too. */
function salvage(input: unknown): Checked {
	const raw = isRecord(input) ? input : {};
	const header = headerSchema.safeParse(raw.header);
	return {
		header: header.success ? header.data : null,
		sections: arrayOf(raw.sections).map((rs, i) => ({
			key: rawKey(rs),
			path: ['sections', i],
			steps: arrayOf(isRecord(rs) ? rs.steps : undefined).map((rst, j) => {
				const path: IssuePath = ['sections', i, 'steps', j];
				const r = isRecord(rst) ? rst : {};
				const { fields, ...rest } = r;
				const shell = stepShellSchema.safeParse(rest);
				return {
					shell: shell.success ? shell.data : null,
					key: rawKey(rst),
					path,
					fields: arrayOf(fields).map((rf, k) => {
						const f = fieldSchema.safeParse(rf);
						return { field: f.success ? f.data : null, key: rawKey(rf), path: [...path, 'fields', k] };
					})
				};
			})
		}))
	};
}

// ---- validation

export type ValidationResult = { ok: true; template: Template; issues: [] } | { ok: false; issues: TemplateIssue[] };

/** Parses and checks a template; an invalid one is refused with every issue named. */
export function validateTemplate(input: unknown): ValidationResult {
	const parsed = templateSchema.safeParse(input);
	if (parsed.success) {
		const issues = checkTemplate(fromTemplate(parsed.data));
		return issues.length ? { ok: false, issues } : { ok: true, template: parsed.data, issues: [] };
	}
	const issues: TemplateIssue[] = parsed.error.issues.map((i) => ({
		path: i.path.map((p) => (typeof p === 'symbol' ? String(p) : p)),
		code: `schema.${i.code}`,
		message: i.message
	}));
	return { ok: false, issues: [...issues, ...checkTemplate(salvage(input))] };
}

function allFields(c: Checked): (CheckedField & { step: CheckedStep })[] {
	return c.sections.flatMap((s) => s.steps.flatMap((step) => step.fields.map((f) => ({ ...f, step }))));
}

function checkTemplate(c: Checked): TemplateIssue[] {
	const issues: TemplateIssue[] = [];
	const add = (path: IssuePath, code: string, message: string) => issues.push({ path, code, message });
	const fields = allFields(c);
	const byKey = new Map<string, Field>();
	for (const f of fields) if (f.field && !byKey.has(f.field.key)) byKey.set(f.field.key, f.field);

	checkKeys(c, add);
	if (c.header) checkHeader(c.header, add);

	const { names, suppressed } = formulaNamesOf(c.header, byKey.values());
	for (const f of fields) if (!f.field && f.key) suppressed.add(f.key);

	const formula = (text: string, path: IssuePath, resultUnit: string | undefined) => {
		const r = checkFormula(text, names, resultUnit);
		for (const i of r.issues) {
			const other = i.code === 'unknown-name' && i.at ? byKey.get(i.at) : undefined;
			if (i.code === 'unknown-name' && i.at && suppressed.has(i.at)) continue;
			if (other) add(path, 'formula.field-kind', `${other.key} is a ${other.kind} field; a formula can use number, calculated and repeated fields`);
			else add(path, `formula.${i.code}`, i.at ? `${i.message} (in ${i.at})` : i.message);
		}
		return r.references;
	};

	const dependencies = new Map<string, string[]>();
	for (const entry of fields) {
		const { field: f, path, step } = entry;
		if (!f) continue;
		const unitOk = !('unit' in f) || checkUnitAt(f.unit, [...path, 'unit'], add);
		const unit = unitOk && 'unit' in f ? f.unit : undefined;
		switch (f.kind) {
			case 'number':
				if (f.limits) checkLimits(f.limits, [...path, 'limits'], f.decimals, unit, byKey, add);
				break;
			case 'calculated':
				dependencies.set(f.key, formula(f.formula, [...path, 'formula'], unit));
				if (f.limits) checkLimits(f.limits, [...path, 'limits'], f.decimals, unit, byKey, add);
				break;
			case 'repeated':
				if (f.limits) checkLimits(f.limits, [...path, 'limits'], f.decimals, unit, byKey, add);
				if (f.meanLimits) checkLimits(f.meanLimits, [...path, 'meanLimits'], f.decimals, unit, byKey, add);
				if (f.acceptanceValue && f.count !== 10 && f.count !== 30) {
					add([...path, 'count'], 'av.count', 'the USP <905> acceptance value is defined for 10 or 30 readings');
				}
				break;
			case 'yield':
				if (f.actualFormula) formula(f.actualFormula, [...path, 'actualFormula'], unit);
				formula(f.theoreticalFormula, [...path, 'theoreticalFormula'], unit);
				if (f.limits && f.limits.minPercent > f.limits.maxPercent) {
					add([...path, 'limits'], 'limits.contradict', `minimum ${f.limits.minPercent} % is above maximum ${f.limits.maxPercent} %`);
				}
				break;
			case 'choice': {
				const values = f.options.map((o) => o.value);
				values.forEach((v, i) => {
					if (values.indexOf(v) !== i) add([...path, 'options', i, 'value'], 'choice.duplicate', `the option '${v}' is listed twice`);
				});
				f.acceptable?.forEach((v, i) => {
					if (!values.includes(v)) add([...path, 'acceptable', i], 'choice.acceptable-unknown', `'${v}' is not one of the options`);
				});
				break;
			}
			case 'material':
				if (step.shell && !step.shell.materials.some((m) => m.itemCode === f.itemCode)) {
					add([...path, 'itemCode'], 'material.not-listed', `the step does not list material ${f.itemCode}`);
				}
				break;
			case 'equipment':
				if (step.shell && !step.shell.equipment.some((e) => e.equipmentClass === f.equipmentClass)) {
					add([...path, 'equipmentClass'], 'equipment.not-listed', `the step does not list equipment class ${f.equipmentClass}`);
				}
				break;
		}
	}
	for (const s of c.sections) for (const st of s.steps) if (st.shell) checkStepShell(st.shell, st.path, byKey, add);
	for (const cycle of findCycles(dependencies, [...byKey.keys()])) {
		const first = fields.find((f) => f.field?.key === cycle[0]);
		add(first ? [...first.path, 'formula'] : [], 'formula.cycle', `calculated fields form a cycle: ${[...cycle, cycle[0]].join(' → ')}`);
	}
	return issues;
}

type Add = (path: IssuePath, code: string, message: string) => void;

/**
 * Names a formula may use, with their units. Names whose unit is broken are "suppressed": their
 * own issue is reported once, so formulas that use them say nothing more.
 */
function formulaNamesOf(header: Header | null, fields: Iterable<Field>): { names: Map<string, string>; suppressed: Set<string> } {
	const names = new Map<string, string>();
	const suppressed = new Set<string>();
	const offer = (name: string, unit: string) => (checkUnit(unit).ok ? names.set(name, unit) : suppressed.add(name));
	if (header) {
		offer('batch_size', header.batchSize.unit);
		offer('theoretical_yield', header.theoreticalYield.unit);
	} else {
		RESERVED_NAMES.forEach((n) => suppressed.add(n));
	}
	for (const f of fields) if (REFERABLE_KINDS.has(f.kind) && 'unit' in f && !names.has(f.key)) offer(f.key, f.unit);
	return { names, suppressed };
}

/**
 * The names a formula of this template may use, with their units: for checking one formula as it
 * is typed (checkFormula in $lib/domain/formula), before the whole template is validated.
 */
export function listFormulaNames(t: Template): Map<string, string> {
	return formulaNamesOf(t.header, t.sections.flatMap((s) => s.steps.flatMap((st) => st.fields))).names;
}

function checkKeys(c: Checked, add: Add): void {
	const seen = new Map<string, IssuePath>();
	// One namespace for sections, steps and fields; only the keys of number, calculated and
	// repeated fields appear in formulas, so only they must not read as units or keywords.
	const visit = (key: string | null, path: IssuePath, inFormulas: boolean) => {
		if (key === null) return;
		const at = [...path, 'key'];
		const earlier = seen.get(key);
		if (earlier) add(at, 'key.duplicate', `the key ${key} is already used at ${formatPath(earlier)}`);
		else seen.set(key, path);
		const reserved = inFormulas ? reservedReason(key) : null;
		if (reserved) add(at, 'key.reserved', `the key ${key} cannot be used: ${reserved}`);
	};
	for (const s of c.sections) {
		visit(s.key, s.path, false);
		for (const st of s.steps) {
			visit(st.key, st.path, false);
			for (const f of st.fields) visit(f.field?.key ?? f.key, f.path, f.field !== null && REFERABLE_KINDS.has(f.field.kind));
		}
	}
}

/** Why a key cannot be used (it would be read as something else in a formula), or null. */
export function reservedReason(key: string): string | null {
	if ((RESERVED_NAMES as readonly string[]).includes(key)) return 'it names a batch value';
	if ((PARSER_KEYWORDS as readonly string[]).includes(key)) return 'it is a formula keyword';
	if ((ALLOWED_FUNCTIONS as readonly string[]).includes(key)) return 'it is a formula function';
	if (isUnitName(key)) return 'it is also a unit';
	return null;
}

function checkUnitAt(unit: string, path: IssuePath, add: Add): boolean {
	const r = checkUnit(unit);
	if (!r.ok) add(path, 'unit.unknown', r.message);
	return r.ok;
}

function checkHeader(h: Header, add: Add): void {
	const b = h.batchSize;
	checkUnitAt(b.unit, ['header', 'batchSize', 'unit'], add);
	if (b.min !== undefined && b.max !== undefined && b.min > b.max) {
		add(['header', 'batchSize', 'min'], 'limits.contradict', `the smallest batch size ${b.min} is above the largest ${b.max}`);
	} else if ((b.min !== undefined && b.value < b.min) || (b.max !== undefined && b.value > b.max)) {
		add(['header', 'batchSize', 'value'], 'limits.target-outside', 'the nominal batch size lies outside its own range');
	}
	const y = h.theoreticalYield;
	checkUnitAt(y.unit, ['header', 'theoreticalYield', 'unit'], add);
	if (y.minPercent > y.maxPercent) {
		add(['header', 'theoreticalYield', 'minPercent'], 'limits.contradict', `minimum ${y.minPercent} % is above maximum ${y.maxPercent} %`);
	}
}

function checkLimits(l: Limits, path: IssuePath, decimals: number, unit: string | undefined, byKey: Map<string, Field>, add: Add): void {
	const precision = (name: string, v: number | undefined) => {
		if (v !== undefined && decimalsOf(v) > decimals) {
			add([...path, name], 'limits.precision', `${name} ${v} has more decimals than the field's ${decimals}`);
		}
	};
	if (l.kind === 'range') {
		if (l.min === undefined && l.max === undefined) add(path, 'limits.empty', 'give a minimum, a maximum or both');
		if (l.min !== undefined && l.max !== undefined && l.min > l.max) add([...path, 'min'], 'limits.contradict', `minimum ${l.min} is above maximum ${l.max}`);
		else if (l.target !== undefined && ((l.min !== undefined && l.target < l.min) || (l.max !== undefined && l.target > l.max))) {
			add([...path, 'target'], 'limits.target-outside', `the target ${l.target} lies outside the limits`);
		}
		precision('min', l.min);
		precision('max', l.max);
		precision('target', l.target);
		return;
	}
	if (l.tolerance < 0) add([...path, 'tolerance'], 'limits.tolerance-negative', 'the tolerance cannot be negative');
	if (l.target !== undefined && l.targetFrom !== undefined) add([...path, 'targetFrom'], 'limits.target-twice', 'give a target or targetFrom, not both');
	if (l.target === undefined && l.targetFrom === undefined) add([...path, 'target'], 'limits.target-missing', 'give a target or targetFrom');
	if (l.targetFrom !== undefined) {
		const from = byKey.get(l.targetFrom);
		if (!from || from.kind !== 'calculated') {
			add([...path, 'targetFrom'], 'limits.target-from', `targetFrom must name a calculated field; ${l.targetFrom} is ${from ? `a ${from.kind} field` : 'no field'}`);
		} else if (unit !== undefined && checkUnit(from.unit).ok && !isSameDimension(from.unit, unit)) {
			add([...path, 'targetFrom'], 'limits.target-from-unit', `${l.targetFrom} is in ${from.unit || 'no unit'}; this field is in ${unit || 'no unit'}`);
		}
	}
	precision('target', l.target);
	if (!l.relative) precision('tolerance', l.tolerance);
}

function checkStepShell(shell: Omit<Step, 'fields'>, path: IssuePath, byKey: Map<string, Field>, add: Add): void {
	shell.roles.forEach((r, i) => {
		if (shell.roles.indexOf(r) !== i) add([...path, 'roles', i], 'step.duplicate-role', `the role ${r} is listed twice`);
	});
	shell.materials.forEach((m, i) => {
		if (shell.materials.findIndex((o) => o.itemCode === m.itemCode) !== i) {
			add([...path, 'materials', i, 'itemCode'], 'step.duplicate-material', `material ${m.itemCode} is listed twice`);
		}
		if (m.quantityFrom !== undefined && byKey.get(m.quantityFrom)?.kind !== 'calculated') {
			add([...path, 'materials', i, 'quantityFrom'], 'step.quantity-from', `quantityFrom must name a calculated field; ${m.quantityFrom} does not`);
		}
	});
	shell.equipment.forEach((e, i) => {
		if (shell.equipment.findIndex((o) => o.equipmentClass === e.equipmentClass) !== i) {
			add([...path, 'equipment', i, 'equipmentClass'], 'step.duplicate-equipment', `equipment class ${e.equipmentClass} is listed twice`);
		}
	});
}

// ---- dependencies

/**
 * Cycles among calculated fields (strongly connected components with more than one field, or a
 * field that uses itself), each as the keys along one cycle, starting with the earliest field.
 */
export function findCycles(deps: ReadonlyMap<string, readonly string[]>, order: readonly string[]): string[][] {
	const rank = new Map(order.map((k, i) => [k, i]));
	const next = (k: string) => (deps.get(k) ?? []).filter((d) => deps.has(d));
	// Tarjan's strongly connected components, iterative enough for templates (recursion depth ≤ fields).
	let index = 0;
	const idx = new Map<string, number>();
	const low = new Map<string, number>();
	const stack: string[] = [];
	const onStack = new Set<string>();
	const components: string[][] = [];
	const connect = (v: string) => {
		idx.set(v, index);
		low.set(v, index++);
		stack.push(v);
		onStack.add(v);
		for (const w of next(v)) {
			if (!idx.has(w)) {
				connect(w);
				low.set(v, Math.min(low.get(v)!, low.get(w)!));
			} else if (onStack.has(w)) low.set(v, Math.min(low.get(v)!, idx.get(w)!));
		}
		if (low.get(v) === idx.get(v)) {
			const comp: string[] = [];
			let w: string;
			do {
				w = stack.pop()!;
				onStack.delete(w);
				comp.push(w);
			} while (w !== v);
			components.push(comp);
		}
	};
	for (const k of deps.keys()) if (!idx.has(k)) connect(k);
	const cycles: string[][] = [];
	for (const comp of components) {
		if (comp.length === 1 && !next(comp[0]).includes(comp[0])) continue;
		const inComp = new Set(comp);
		const start = [...comp].sort((a, b) => (rank.get(a) ?? 0) - (rank.get(b) ?? 0))[0];
		// Walk inside the component back to the start: breadth-first gives a shortest cycle.
		const prev = new Map<string, string>();
		const queue = [start];
		let found = false;
		while (queue.length && !found) {
			const v = queue.shift()!;
			for (const w of next(v)) {
				if (!inComp.has(w)) continue;
				if (w === start) {
					prev.set(start, v);
					found = true;
					break;
				}
				if (!prev.has(w)) {
					prev.set(w, v);
					queue.push(w);
				}
			}
		}
		const cycle = [start];
		for (let v = prev.get(start)!; v !== start; v = prev.get(v)!) cycle.splice(1, 0, v);
		cycles.push(cycle);
	}
	return cycles;
}

// ---- content hash, export and import

/** What a template says, without its lifecycle status: approving a version does not change it. */
export function templateContent(t: Template): unknown {
	const { status: _status, ...header } = t.header;
	return { ...t, header };
}

/** SHA-256 (hex) of the RFC 8785 canonical JSON of the template's content. */
export function hashTemplate(t: Template): string {
	return sha256Hex(canonicalJson(templateContent(t)));
}

export const EXPORT_FORMAT = 'rimebook.master-template';
export const EXPORT_FORMAT_VERSION = 1;

/** A template as a file to hand over: the template and its content hash. */
export function exportTemplate(t: Template): string {
	return JSON.stringify({ format: EXPORT_FORMAT, formatVersion: EXPORT_FORMAT_VERSION, contentHash: hashTemplate(t), template: t }, null, 2);
}

export type ImportResult = { ok: true; template: Template; hash: string } | { ok: false; issues: TemplateIssue[] };

/** Reads an exported template: the format, the template's validity and its hash are all checked. */
export function importTemplate(text: string): ImportResult {
	let doc: unknown;
	try {
		doc = JSON.parse(text);
	} catch (e) {
		return { ok: false, issues: [{ path: [], code: 'import.not-json', message: `the file is not JSON: ${(e as Error).message}` }] };
	}
	if (!isRecord(doc) || doc.format !== EXPORT_FORMAT || doc.formatVersion !== EXPORT_FORMAT_VERSION) {
		return { ok: false, issues: [{ path: ['format'], code: 'import.format', message: `the file is not a ${EXPORT_FORMAT} version ${EXPORT_FORMAT_VERSION} export` }] };
	}
	const v = validateTemplate(doc.template);
	if (!v.ok) return { ok: false, issues: v.issues.map((i) => ({ ...i, path: ['template', ...i.path] })) };
	const hash = hashTemplate(v.template);
	if (doc.contentHash !== hash) {
		return { ok: false, issues: [{ path: ['contentHash'], code: 'import.hash-mismatch', message: `the file says ${String(doc.contentHash)}, its content hashes to ${hash}` }] };
	}
	return { ok: true, template: v.template, hash };
}
