/**
 * Formulas of master batch records: arithmetic with units, rounding and a few named functions.
 *
 * Parsing uses a mathjs instance built from a handful of factories only (no evaluate, compile,
 * import, simplify, derivative, matrices ...). A parsed formula is never compiled by mathjs: it
 * is walked by our own evaluator, which knows an allow-list of node types, operators and
 * functions, so nothing in an expression can reach the mathjs instance, the JavaScript runtime
 * or the scope's prototype chain (defence in depth against expression injection).
 *
 * Torr is defined exactly, 1 Torr = 101325/760 Pa (NIST SP 811, App. B.8), with short prefixes
 * (mTorr, uTorr); mathjs's own `torr` and `mmHg` are rounded to 133.322 Pa and are redefined.
 */
import {
	absDependencies,
	ceilDependencies,
	create,
	createUnitDependencies,
	divideDependencies,
	floorDependencies,
	maxDependencies,
	minDependencies,
	multiplyDependencies,
	parseDependencies,
	powDependencies,
	roundDependencies,
	sqrtDependencies,
	subtractDependencies,
	addDependencies,
	toDependencies,
	unaryMinusDependencies,
	unaryPlusDependencies,
	unitDependencies,
	type MathNode,
	type Unit
} from 'mathjs';

/** A measured or computed amount. `unit` is a unit text of this module ('' = dimensionless). */
export interface UnitValue {
	value: number;
	unit: string;
}

export type FormulaIssueCode =
	| 'too-long'
	| 'empty'
	| 'parse'
	| 'not-allowed'
	| 'unknown-name'
	| 'unit-mismatch'
	| 'result-unit'
	| 'missing-value'
	| 'unknown-unit'
	| 'not-finite';

export interface FormulaIssue {
	code: FormulaIssueCode;
	message: string;
	/** The part of the formula the issue is about, as mathjs prints it. */
	at?: string;
}

export type FormulaResult<T> = { ok: true; value: T } | { ok: false; issues: FormulaIssue[] };

/** A parsed formula that passed the structural allow-list; evaluate it many times. */
export interface CompiledFormula {
	readonly text: string;
	/** Every name in the formula (field keys, batch_size, units), in order of first use. */
	readonly symbols: readonly string[];
	/** The names that are not units: what the formula needs values for. */
	readonly references: readonly string[];
	readonly node: MathNode;
}

export const MAX_FORMULA_LENGTH = 500;

/** The only functions a formula may call. */
export const ALLOWED_FUNCTIONS = ['round', 'floor', 'ceil', 'min', 'max', 'abs', 'sqrt'] as const;

/** Operators by mathjs function name; everything else (mod, comparisons, logic, bits, !) is refused. */
const ALLOWED_OPERATORS = new Set(['add', 'subtract', 'multiply', 'divide', 'pow', 'unaryMinus', 'unaryPlus', 'to']);

/** Words the mathjs parser treats as operators or literals: never usable as a field key. */
export const PARSER_KEYWORDS = ['to', 'in', 'mod', 'and', 'or', 'not', 'xor', 'true', 'false', 'null', 'undefined', 'NaN', 'Infinity', 'end'] as const;

/** Count units: each is its own dimension, so vials and stoppers never add up by mistake. */
export const COUNT_UNITS = ['vial', 'stopper', 'cap', 'tray'] as const;

const math = create({
	parseDependencies,
	unitDependencies,
	createUnitDependencies,
	toDependencies,
	addDependencies,
	subtractDependencies,
	multiplyDependencies,
	divideDependencies,
	powDependencies,
	unaryMinusDependencies,
	unaryPlusDependencies,
	roundDependencies,
	floorDependencies,
	ceilDependencies,
	minDependencies,
	maxDependencies,
	absDependencies,
	sqrtDependencies
}, { predictable: true }); // predictable: sqrt(-1) is NaN (refused), never a complex number

// NIST SP 811 App. B.8: 1 Torr = (101 325/760) Pa exactly; 1 mmHg (conventional) = 133.322 387 415 Pa.
const TORR_IN_PA = 101325 / 760;
math.createUnit('Torr', { definition: math.unit(TORR_IN_PA, 'Pa'), prefixes: 'short' }, { override: true });
math.createUnit('torr', { definition: math.unit(TORR_IN_PA, 'Pa'), prefixes: 'short' }, { override: true });
math.createUnit('mmHg', { definition: math.unit(133.322387415, 'Pa') }, { override: true });
math.createUnit('percent', { definition: '0.01' });
for (const name of COUNT_UNITS) math.createUnit(name, { aliases: [`${name}s`] });

// Nothing may add or change units or functions of this instance after set-up.
const refuse = (name: string) => () => {
	throw new Error(`${name} is disabled in the formula instance`);
};
math.import({ import: refuse('import'), createUnit: refuse('createUnit') }, { override: true });

type Value = number | Unit;

/** An issue found while evaluating, carried out of the recursive walk. */
class EvaluationError extends Error {
	constructor(
		readonly issue: FormulaIssue
	) {
		super(issue.message);
	}
}

const functions: Record<(typeof ALLOWED_FUNCTIONS)[number], (...args: Value[]) => Value> = {
	round: (...a) => (math.round as (...x: Value[]) => Value)(...a),
	floor: (...a) => (math.floor as (...x: Value[]) => Value)(...a),
	ceil: (...a) => (math.ceil as (...x: Value[]) => Value)(...a),
	min: (...a) => (math.min as (...x: Value[]) => Value)(...a),
	max: (...a) => (math.max as (...x: Value[]) => Value)(...a),
	abs: (a) => (math.abs as (x: Value) => Value)(a),
	sqrt: (a) => (math.sqrt as (x: Value) => Value)(a)
};

const operators: Record<string, (...args: Value[]) => Value> = {
	add: (a, b) => (math.add as (x: Value, y: Value) => Value)(a, b),
	subtract: (a, b) => (math.subtract as (x: Value, y: Value) => Value)(a, b),
	multiply: (a, b) => (math.multiply as (x: Value, y: Value) => Value)(a, b),
	divide: (a, b) => (math.divide as (x: Value, y: Value) => Value)(a, b),
	pow: (a, b) => (math.pow as (x: Value, y: Value) => Value)(a, b),
	unaryMinus: (a) => (math.unaryMinus as (x: Value) => Value)(a),
	unaryPlus: (a) => (math.unaryPlus as (x: Value) => Value)(a),
	to: (a, b) => (math.to as (x: Value, y: Value) => Value)(a, b)
};

function isAllowedFunction(name: string): name is (typeof ALLOWED_FUNCTIONS)[number] {
	return (ALLOWED_FUNCTIONS as readonly string[]).includes(name);
}

/** Text of a unit in the syntax of this module: °C → degC, µ → u, % → percent. */
export function normalizeUnit(text: string): string {
	return text
		.trim()
		.replace(/°C/g, 'degC')
		.replace(/°F/g, 'degF')
		.replace(/[µμ]/g, 'u')
		.replace(/%/g, 'percent');
}

/** Whether a single name is a unit of the formula instance (with or without prefix). */
export function isUnitName(name: string): boolean {
	return math.Unit.isValuelessUnit(name);
}

/** Checks a unit text; '' is the dimensionless unit. Returns the normalised text. */
export function checkUnit(text: string): { ok: true; unit: string } | { ok: false; message: string } {
	const unit = normalizeUnit(text);
	if (unit === '') return { ok: true, unit };
	try {
		const u = math.unit(unit);
		if (u.value !== null) return { ok: false, message: `'${text}' is a quantity, not a unit` };
		return { ok: true, unit };
	} catch {
		return { ok: false, message: `'${text}' is not a known unit` };
	}
}

function valuelessUnit(unit: string): Unit {
	return math.unit(normalizeUnit(unit));
}

/** Whether two unit texts measure the same kind of quantity ('' only matches dimensionless). */
export function isSameDimension(a: string, b: string): boolean {
	const ua = normalizeUnit(a);
	const ub = normalizeUnit(b);
	try {
		if (ua === '' || ub === '') return isDimensionless(ua) && isDimensionless(ub);
		return valuelessUnit(ua).equalBase(valuelessUnit(ub));
	} catch {
		return false; // an unknown unit matches nothing
	}
}

function isDimensionless(unit: string): boolean {
	return unit === '' || valuelessUnit(unit).dimensions.every((d) => d === 0);
}

function toValue(q: UnitValue): Value {
	const unit = normalizeUnit(q.unit);
	if (unit === '') return q.value;
	try {
		return math.unit(q.value, unit);
	} catch {
		throw new EvaluationError({ code: 'unknown-unit', message: `'${q.unit}' is not a known unit`, at: q.unit });
	}
}

/** Converts a formula value to a number in `unit`, or says why it cannot. */
function toNumberIn(value: Value, unit: string): number | string {
	const target = normalizeUnit(unit);
	if (typeof value === 'number') {
		if (target === '') return value;
		if (!checkUnit(target).ok) return `'${unit}' is not a known unit`;
		// A plain number is a dimensionless quantity: 0.95 in percent is 95.
		if (isDimensionless(target)) return value / math.unit(1, target).value;
		return `the result has no unit; expected ${unit}`;
	}
	if (!math.isUnit(value)) return 'the result is not a number';
	if (target === '') {
		if (value.dimensions.every((d) => d === 0)) return value.value;
		return `the result is in ${value.formatUnits()}; expected a number without unit`;
	}
	if (!checkUnit(target).ok) return `'${unit}' is not a known unit`;
	if (!value.equalBase(valuelessUnit(target))) return `the result is in ${value.formatUnits()}; expected ${unit}`;
	return value.toNumber(target);
}

/** Converts a quantity into another unit of the same dimension. */
export function convertUnitValue(q: UnitValue, unit: string): FormulaResult<UnitValue> {
	try {
		const n = toNumberIn(toValue(q), unit);
		if (typeof n === 'string') return { ok: false, issues: [{ code: 'result-unit', message: n }] };
		return { ok: true, value: { value: n, unit: normalizeUnit(unit) } };
	} catch (e) {
		if (e instanceof EvaluationError) return { ok: false, issues: [e.issue] };
		throw e;
	}
}

/** Parses a formula and walks it against the allow-list, naming every refused part. */
export function compileFormula(text: string): FormulaResult<CompiledFormula> {
	if (text.length > MAX_FORMULA_LENGTH) {
		return { ok: false, issues: [{ code: 'too-long', message: `a formula may have at most ${MAX_FORMULA_LENGTH} characters` }] };
	}
	if (text.trim() === '') return { ok: false, issues: [{ code: 'empty', message: 'the formula is empty' }] };
	let node: MathNode;
	try {
		node = math.parse(text) as MathNode;
	} catch (e) {
		return { ok: false, issues: [{ code: 'parse', message: `cannot be read: ${(e as Error).message}` }] };
	}
	const issues: FormulaIssue[] = [];
	const symbols: string[] = [];
	walk(node, issues, symbols);
	if (issues.length) return { ok: false, issues };
	const references = symbols.filter((name) => !isUnitName(name));
	return { ok: true, value: { text, symbols, references, node } };
}

function refusal(node: MathNode): string | null {
	switch (node.type) {
		case 'ConstantNode':
		case 'SymbolNode':
		case 'ParenthesisNode':
		case 'OperatorNode':
		case 'FunctionNode':
			return null;
		case 'AccessorNode':
			return 'property or index access is not allowed';
		case 'IndexNode':
			return 'indexes are not allowed';
		case 'AssignmentNode':
			return 'assignments are not allowed';
		case 'FunctionAssignmentNode':
			return 'defining functions is not allowed';
		case 'ObjectNode':
			return 'objects are not allowed';
		case 'ArrayNode':
			return 'lists and matrices are not allowed';
		case 'RangeNode':
			return 'ranges are not allowed';
		case 'BlockNode':
			return 'a formula is one expression (no ; or line breaks)';
		case 'ConditionalNode':
			return 'conditions (? :) are not allowed';
		case 'RelationalNode':
			return 'comparisons are not allowed';
		default:
			return `'${node.type}' is not allowed`;
	}
}

function walk(node: MathNode, issues: FormulaIssue[], symbols: string[]): void {
	const why = refusal(node);
	if (why) {
		issues.push({ code: 'not-allowed', message: why, at: node.toString() });
		return; // the parts of a refused node are not looked at: the whole node is refused
	}
	const n = node as MathNode & Record<string, unknown>;
	switch (node.type) {
		case 'ConstantNode': {
			const v = n.value;
			if (typeof v !== 'number') {
				const what = typeof v === 'string' ? 'text' : String(v);
				issues.push({ code: 'not-allowed', message: `${what} is not allowed in a formula; only numbers`, at: node.toString() });
			} else if (!Number.isFinite(v)) {
				issues.push({ code: 'not-finite', message: 'the number is too large', at: node.toString() });
			}
			return;
		}
		case 'SymbolNode': {
			const name = n.name as string;
			// `min` is a function and the unit minute: as a bare name it is the unit.
			if (isAllowedFunction(name) && !isUnitName(name)) {
				issues.push({ code: 'not-allowed', message: `the function ${name} must be called with arguments`, at: name });
			} else if (!symbols.includes(name)) {
				symbols.push(name); // resolved later: a caller's name first, else a unit
			}
			return;
		}
		case 'ParenthesisNode':
			walk(n.content as MathNode, issues, symbols);
			return;
		case 'OperatorNode': {
			const fn = n.fn as string;
			if (n.isPercentage === true) {
				issues.push({ code: 'not-allowed', message: "'%' is not allowed: write percent as a unit or divide by 100", at: node.toString() });
				return;
			}
			if (!ALLOWED_OPERATORS.has(fn)) {
				issues.push({ code: 'not-allowed', message: `the operator '${String(n.op)}' is not allowed`, at: node.toString() });
				return;
			}
			for (const a of n.args as MathNode[]) walk(a, issues, symbols);
			return;
		}
		case 'FunctionNode': {
			const fn = n.fn as MathNode;
			const name = fn.type === 'SymbolNode' ? ((fn as MathNode & { name: string }).name) : null;
			if (name === null) {
				const why = fn.type === 'AccessorNode' ? 'property or index access is not allowed' : 'only named functions may be called';
				issues.push({ code: 'not-allowed', message: why, at: node.toString() });
				return;
			}
			if (!isAllowedFunction(name)) {
				issues.push({
					code: 'not-allowed',
					message: `the function ${name} is not allowed (allowed: ${ALLOWED_FUNCTIONS.join(', ')})`,
					at: node.toString()
				});
				return;
			}
			for (const a of n.args as MathNode[]) walk(a, issues, symbols);
			return;
		}
	}
}

/** Our evaluator: only the node types that passed `walk` exist in the tree. */
function evaluateNode(node: MathNode, scope: ReadonlyMap<string, Value>): Value {
	const n = node as MathNode & Record<string, unknown>;
	switch (node.type) {
		case 'ConstantNode':
			return n.value as number;
		case 'SymbolNode': {
			const name = n.name as string;
			const v = scope.get(name);
			if (v !== undefined) return v;
			if (isUnitName(name)) return math.unit(name);
			throw new EvaluationError({ code: 'missing-value', message: `no value for ${name}`, at: name });
		}
		case 'ParenthesisNode':
			return evaluateNode(n.content as MathNode, scope);
		case 'OperatorNode':
		case 'FunctionNode': {
			const args = (n.args as MathNode[]).map((a) => evaluateNode(a, scope));
			const name = node.type === 'OperatorNode' ? (n.fn as string) : ((n.fn as MathNode & { name: string }).name);
			// Own properties only: a crafted node named "constructor" finds nothing.
			const table: Record<string, (...args: Value[]) => Value> = node.type === 'OperatorNode' ? operators : functions;
			const f = Object.hasOwn(table, name) ? table[name] : undefined;
			if (!f) throw new EvaluationError({ code: 'not-allowed', message: `${name} is not allowed`, at: node.toString() });
			try {
				return f(...args);
			} catch (e) {
				throw new EvaluationError({ code: 'unit-mismatch', message: explain(name, args, e as Error), at: node.toString() });
			}
		}
		default:
			throw new EvaluationError({ code: 'not-allowed', message: `'${node.type}' is not allowed`, at: node.toString() });
	}
}

function describe(v: Value): string {
	return typeof v === 'number' ? 'a number without unit' : math.isUnit(v) ? v.formatUnits() || 'a number without unit' : typeof v;
}

/** A plain-words reason for a failed operation, naming the units involved. */
function explain(name: string, args: Value[], e: Error): string {
	const kinds = args.map(describe).join(' and ');
	if (name === 'to') return `cannot convert ${describe(args[0])} to ${describe(args[1])}`;
	if (name === 'round' || name === 'floor' || name === 'ceil') {
		if (args.some((a) => math.isUnit(a))) return `${name} of a quantity with a unit needs the unit, e.g. ${name}(x, 1, g)`;
	}
	if (['add', 'subtract', 'min', 'max'].includes(name)) return `units do not match: ${kinds}`;
	return `${name} cannot work on ${kinds} (${e.message})`;
}

function evaluateCompiled(formula: CompiledFormula, scope: ReadonlyMap<string, Value>): Value {
	const v = evaluateNode(formula.node, scope);
	if (typeof v === 'number' && !Number.isFinite(v)) {
		throw new EvaluationError({ code: 'not-finite', message: 'the result is not a finite number (division by zero?)' });
	}
	if (math.isUnit(v) && !Number.isFinite(v.value)) {
		throw new EvaluationError({ code: 'not-finite', message: 'the result is not a finite number (division by zero?)' });
	}
	return v;
}

/**
 * Checks a formula when it is written: allowed syntax, known names, units that fit together
 * and a result in `resultUnit` (not checked when undefined). `names` maps every name the
 * formula may use to its unit text; the units must be valid (checkUnit).
 * Units are checked by evaluating with 1 in each name's unit: dimensions do not depend on values.
 */
export function checkFormula(
	text: string,
	names: ReadonlyMap<string, string>,
	resultUnit?: string
): { ok: boolean; issues: FormulaIssue[]; references: string[] } {
	const compiled = compileFormula(text);
	if (!compiled.ok) return { ok: false, issues: compiled.issues, references: [] };
	const f = compiled.value;
	const issues: FormulaIssue[] = [];
	const references = f.symbols.filter((name) => names.has(name));
	for (const name of f.symbols) {
		if (!names.has(name) && !isUnitName(name)) {
			issues.push({ code: 'unknown-name', message: `${name} is neither a field, a batch value nor a unit`, at: name });
		}
	}
	if (issues.length) return { ok: false, issues, references };
	try {
		const scope = new Map<string, Value>();
		for (const name of references) scope.set(name, toValue({ value: 1, unit: names.get(name) ?? '' }));
		const v = evaluateCompiled(f, scope);
		const n = resultUnit === undefined ? 0 : toNumberIn(v, resultUnit);
		if (typeof n === 'string') issues.push({ code: 'result-unit', message: n });
	} catch (e) {
		if (!(e instanceof EvaluationError)) throw e;
		if (e.issue.code !== 'not-finite') issues.push(e.issue);
	}
	return { ok: issues.length === 0, issues, references };
}

/** Evaluates a formula with the given values; the result is converted to `resultUnit`. */
export function evaluateFormula(
	formula: string | CompiledFormula,
	values: Readonly<Record<string, UnitValue>>,
	resultUnit: string
): FormulaResult<UnitValue> {
	let f: CompiledFormula;
	if (typeof formula === 'string') {
		const c = compileFormula(formula);
		if (!c.ok) return c;
		f = c.value;
	} else {
		f = formula;
	}
	const missing = f.references.filter((r) => !Object.hasOwn(values, r));
	if (missing.length) {
		return { ok: false, issues: missing.map((m) => ({ code: 'missing-value' as const, message: `no value for ${m}`, at: m })) };
	}
	try {
		// A given value wins over a unit of the same name, as in checkFormula.
		const scope = new Map<string, Value>();
		for (const name of f.symbols) if (Object.hasOwn(values, name)) scope.set(name, toValue(values[name]));
		const v = evaluateCompiled(f, scope);
		const n = toNumberIn(v, resultUnit);
		if (typeof n === 'string') return { ok: false, issues: [{ code: 'result-unit', message: n }] };
		if (!Number.isFinite(n)) return { ok: false, issues: [{ code: 'not-finite', message: 'the result is not a finite number' }] };
		return { ok: true, value: { value: n, unit: normalizeUnit(resultUnit) } };
	} catch (e) {
		if (e instanceof EvaluationError) return { ok: false, issues: [e.issue] };
		throw e;
	}
}
