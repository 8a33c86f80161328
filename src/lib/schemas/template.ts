/**
 * The master batch record template: one zod schema for the authoring forms, the API and the
 * server (issue 5). It checks shape only; what needs the whole template (unique keys, limits
 * that contradict, formulas, units, cycles) is checked by validateTemplate in
 * $lib/domain/template, which also runs this schema.
 *
 * ISA-88 words: a template is a master recipe's procedure; sections are unit procedures, steps
 * are operations, fields are what an operation records. 21 CFR 211.186 lists what the master
 * record must name: product, strength, dosage form, components and quantities, theoretical
 * yield with its limits, instructions and specifications.
 */
import { z } from 'zod';
import { recipeSchema } from '$lib/domain/lyo/recipe';

/** Keys: how formulas and entries name a section, step or field; unique across the template. */
export const KEY_PATTERN = /^[a-z][a-z0-9_]{0,47}$/;
export const keySchema = z
	.string()
	.regex(KEY_PATTERN, 'a key is 1–48 lower-case letters, digits or _, starting with a letter');

const codeSchema = z
	.string()
	.regex(/^[A-Za-z0-9][A-Za-z0-9._/-]{0,39}$/, 'a code is 1–40 letters, digits, . _ / or -');
const labelSchema = z.string().trim().min(1).max(200);
/** A unit text (mathjs syntax, e.g. g, mg/mL, degC, mTorr, vial; '' = no unit); checked by validateTemplate. */
const unitSchema = z.string().trim().max(40);
const formulaSchema = z.string().trim().min(1).max(500);
const decimalsSchema = z.number().int().min(0).max(6);

/** The same states as the master_record table (design.md, "Look and words"). */
export const masterStatuses = ['draft', 'in-review', 'approved', 'effective', 'superseded', 'retired'] as const;
export type TemplateStatus = (typeof masterStatuses)[number];

/** Who may perform a step (roles of $lib/domain/permissions that sign GMP entries). */
export const performerRoles = ['operator', 'supervisor', 'qa'] as const;
export type PerformerRole = (typeof performerRoles)[number];

/** min/max (either may be open), with an optional target inside them. */
export const rangeLimitsSchema = z.strictObject({
	kind: z.literal('range'),
	min: z.number().optional(),
	max: z.number().optional(),
	target: z.number().optional()
});

/**
 * target ± tolerance. The target is a number, or `targetFrom` names a calculated field whose
 * value (scaled to the batch size) is the target. `relative`: tolerance in % of the target.
 */
export const toleranceLimitsSchema = z.strictObject({
	kind: z.literal('tolerance'),
	target: z.number().optional(),
	targetFrom: keySchema.optional(),
	tolerance: z.number(),
	relative: z.boolean().default(false)
});

export const limitsSchema = z.discriminatedUnion('kind', [rangeLimitsSchema, toleranceLimitsSchema]);

/** Limits of a yield, in % of theoretical (21 CFR 211.186(b)(7)). */
export const yieldLimitsSchema = z.strictObject({
	minPercent: z.number().min(0),
	maxPercent: z.number().positive()
});

const fieldBase = {
	key: keySchema,
	label: labelSchema,
	help: z.string().trim().max(500).optional(),
	required: z.boolean().default(true)
};

export const numberFieldSchema = z.strictObject({
	...fieldBase,
	kind: z.literal('number'),
	unit: unitSchema.default(''),
	decimals: decimalsSchema,
	limits: limitsSchema.optional()
});

export const textFieldSchema = z.strictObject({
	...fieldBase,
	kind: z.literal('text'),
	maxLength: z.number().int().min(1).max(5000).default(200),
	multiline: z.boolean().default(false)
});

export const choiceFieldSchema = z.strictObject({
	...fieldBase,
	kind: z.literal('choice'),
	options: z
		.array(z.strictObject({ value: z.string().trim().min(1).max(60), label: labelSchema }))
		.min(2)
		.max(50),
	multiple: z.boolean().default(false),
	/** Values within limits; choosing another one is out of limits. None listed: all are fine. */
	acceptable: z.array(z.string()).optional()
});

/** A yes/no check; if `expected` is set, the other answer is out of limits. */
export const checkFieldSchema = z.strictObject({
	...fieldBase,
	kind: z.literal('check'),
	expected: z.boolean().optional()
});

export const dateTimeFieldSchema = z.strictObject({
	...fieldBase,
	kind: z.literal('datetime')
});

/** A material lot, scanned or picked; its status (released) and expiry are checked at entry. */
export const materialFieldSchema = z.strictObject({
	...fieldBase,
	kind: z.literal('material'),
	itemCode: codeSchema
});

/** An equipment item of a class; its status and calibration are checked at entry. */
export const equipmentFieldSchema = z.strictObject({
	...fieldBase,
	kind: z.literal('equipment'),
	equipmentClass: codeSchema
});

/** A value computed from other fields and batch_size / theoretical_yield. */
export const calculatedFieldSchema = z.strictObject({
	...fieldBase,
	kind: z.literal('calculated'),
	formula: formulaSchema,
	unit: unitSchema.default(''),
	decimals: decimalsSchema,
	limits: limitsSchema.optional()
});

export const attachmentFieldSchema = z.strictObject({
	...fieldBase,
	kind: z.literal('attachment'),
	/** Accepted media types, e.g. text/csv, application/pdf. */
	accept: z.array(z.string().regex(/^[a-z]+\/[a-z0-9.+-]+$/, 'a media type such as text/csv')).min(1),
	maxSizeMb: z.number().positive().max(500).default(20)
});

/**
 * n readings (fill weights, contents): each reading against `limits`, their mean against
 * `meanLimits`, the sample SD at most `maxSd`; `acceptanceValue`: the USP <905> AV of the
 * readings as % of `labelClaim` (the reading that is 100 % of label claim), n = 10 or 30.
 */
export const repeatedFieldSchema = z.strictObject({
	...fieldBase,
	kind: z.literal('repeated'),
	unit: unitSchema.default(''),
	decimals: decimalsSchema,
	count: z.number().int().min(2).max(100),
	limits: limitsSchema.optional(),
	meanLimits: limitsSchema.optional(),
	maxSd: z.number().min(0).optional(),
	acceptanceValue: z.strictObject({ labelClaim: z.number().positive() }).optional()
});

/**
 * Yield or reconciliation: actual against theoretical, in % (21 CFR 210.3, 211.103). The actual
 * is entered unless `actualFormula` computes it; `theoreticalFormula` defaults to the header's
 * theoretical yield scaled to the batch size. Limits default to the header's.
 */
export const yieldFieldSchema = z.strictObject({
	...fieldBase,
	kind: z.literal('yield'),
	unit: unitSchema,
	actualFormula: formulaSchema.optional(),
	theoreticalFormula: formulaSchema.default('theoretical_yield'),
	decimals: decimalsSchema.default(1),
	limits: yieldLimitsSchema.optional()
});

/** The freeze-drying recipe (phases, setpoints, ranges, critical temperature and margin). */
export const recipeFieldSchema = z.strictObject({
	...fieldBase,
	kind: z.literal('recipe'),
	recipe: recipeSchema
});

export const fieldSchema = z.discriminatedUnion('kind', [
	numberFieldSchema,
	textFieldSchema,
	choiceFieldSchema,
	checkFieldSchema,
	dateTimeFieldSchema,
	materialFieldSchema,
	equipmentFieldSchema,
	calculatedFieldSchema,
	attachmentFieldSchema,
	repeatedFieldSchema,
	yieldFieldSchema,
	recipeFieldSchema
]);

export const fieldKinds = [
	'number', 'text', 'choice', 'check', 'datetime', 'material', 'equipment', 'calculated',
	'attachment', 'repeated', 'yield', 'recipe'
] as const;
export type FieldKind = (typeof fieldKinds)[number];

export const stepSchema = z.strictObject({
	key: keySchema,
	title: labelSchema,
	/** Markdown; rendered with renderInstructions ($lib/domain/markdown), which sanitises it. */
	instructions: z.string().max(20_000).default(''),
	roles: z.array(z.enum(performerRoles)).min(1),
	/** A critical step needs a second, different person's verification (21 CFR 211.188(b)(11)). */
	critical: z.boolean().default(false),
	/** Without this the step waits for every earlier step (21 CFR 11.10(f)). */
	mayRunOutOfOrder: z.boolean().default(false),
	equipment: z
		.array(z.strictObject({ equipmentClass: codeSchema, purpose: z.string().trim().max(200).optional() }))
		.default([]),
	/** Components the step uses; `quantityFrom` names the calculated field with the amount. */
	materials: z
		.array(z.strictObject({ itemCode: codeSchema, name: labelSchema, quantityFrom: keySchema.optional() }))
		.default([]),
	fields: z.array(fieldSchema).default([])
});

export const sectionSchema = z.strictObject({
	key: keySchema,
	title: labelSchema,
	steps: z.array(stepSchema).min(1)
});

export const headerSchema = z.strictObject({
	productName: labelSchema,
	productCode: codeSchema,
	strength: z.string().trim().min(1).max(100),
	dosageForm: labelSchema,
	/** Nominal batch size; `min`/`max` bound the sizes a batch may be issued at (validated range). */
	batchSize: z.strictObject({
		value: z.number().positive(),
		unit: unitSchema,
		min: z.number().positive().optional(),
		max: z.number().positive().optional()
	}),
	/** At the nominal batch size; scaled in proportion for other sizes. */
	theoreticalYield: z.strictObject({
		value: z.number().positive(),
		unit: unitSchema,
		minPercent: z.number().min(0),
		maxPercent: z.number().positive()
	}),
	version: z.number().int().positive(),
	status: z.enum(masterStatuses).default('draft')
});

export const TEMPLATE_SCHEMA_VERSION = 1;

export const templateSchema = z.strictObject({
	schemaVersion: z.literal(TEMPLATE_SCHEMA_VERSION),
	header: headerSchema,
	sections: z.array(sectionSchema).min(1)
});

export type Limits = z.output<typeof limitsSchema>;
export type RangeLimits = z.output<typeof rangeLimitsSchema>;
export type ToleranceLimits = z.output<typeof toleranceLimitsSchema>;
export type YieldLimits = z.output<typeof yieldLimitsSchema>;
export type Field = z.output<typeof fieldSchema>;
export type NumberField = z.output<typeof numberFieldSchema>;
export type TextField = z.output<typeof textFieldSchema>;
export type ChoiceField = z.output<typeof choiceFieldSchema>;
export type CheckField = z.output<typeof checkFieldSchema>;
export type DateTimeField = z.output<typeof dateTimeFieldSchema>;
export type MaterialField = z.output<typeof materialFieldSchema>;
export type EquipmentField = z.output<typeof equipmentFieldSchema>;
export type CalculatedField = z.output<typeof calculatedFieldSchema>;
export type AttachmentField = z.output<typeof attachmentFieldSchema>;
export type RepeatedField = z.output<typeof repeatedFieldSchema>;
export type YieldField = z.output<typeof yieldFieldSchema>;
export type RecipeField = z.output<typeof recipeFieldSchema>;
export type Step = z.output<typeof stepSchema>;
export type Section = z.output<typeof sectionSchema>;
export type Header = z.output<typeof headerSchema>;
export type Template = z.output<typeof templateSchema>;
/** What an author or an API client may send: defaults not yet filled in. */
export type TemplateInput = z.input<typeof templateSchema>;
export type FieldInput = z.input<typeof fieldSchema>;
