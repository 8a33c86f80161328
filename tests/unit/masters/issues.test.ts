import { describe, expect, test } from 'vitest';
import { describeIssue, issuesUnder, locateIssue, stepOfIssue } from '$lib/components/masters/issues';
import { demoTemplateInput } from '$lib/domain/fixtures/demo-template';
import { validateTemplate } from '$lib/domain/template';
import { messagesFor } from '$lib/i18n';

describe('validator issues in the author’s words', () => {
	const m = messagesFor('en');
	test('an issue is located by section, step and field titles, then the property', () => {
		expect(locateIssue(demoTemplateInput, ['sections', 0, 'steps', 0, 'fields', 0, 'formula'])).toBe('Dispensing › Dispense sucrose › Sucrose to dispense › formula');
		expect(locateIssue(demoTemplateInput, ['sections', 0, 'steps', 1, 'materials', 2, 'quantityFrom'])).toBe('Dispensing › Dispense buffer salts and polysorbate 80 › materials › #3 › quantityFrom');
		expect(locateIssue(demoTemplateInput, ['header', 'batchSize', 'min'])).toBe('header › batchSize › min');
		expect(stepOfIssue(['sections', 2, 'steps', 1, 'fields', 0])).toEqual({ s: 2, st: 1 });
		expect(stepOfIssue(['header', 'strength'])).toBeNull();
	});

	test('every issue code the validator gives for a broken template has a catalogue phrase', () => {
		const broken = structuredClone(demoTemplateInput) as unknown as { sections: { steps: { fields: Record<string, unknown>[] }[] }[] };
		const fields = broken.sections[0].steps[0].fields;
		fields.push({ kind: 'calculated', key: 'a1', label: 'A', formula: 'a2 + 1 g', unit: 'g', decimals: 1 });
		fields.push({ kind: 'calculated', key: 'a2', label: 'B', formula: 'a1 + 1 g + 1 h', unit: 'g', decimals: 1 });
		fields.push({ kind: 'number', key: 'sucrose_qty', label: 'C', unit: 'parsec_x', decimals: 1, limits: { kind: 'range', min: 3, max: 1 } });
		const v = validateTemplate(broken);
		if (v.ok) throw new Error('expected issues');
		for (const issue of v.issues) expect(m.masters.issueCodes[issue.code], issue.code).toBeTypeOf('string');
		expect(describeIssue(m, v.issues[0])).toMatch(/: /);
		expect(issuesUnder(v.issues, ['sections', 0, 'steps', 0]).length).toBe(v.issues.length);
	});
});
