import { describe, expect, it } from 'vitest';
import { parseRecipe, STANDARD_RECIPE } from './mesh/repair';
import { REPAIR_OPS } from './mesh/repair/ops';
import { emptyRow, recipeFormSchema, rowToStep, stepToRow } from './recipe-form';

const form = (steps: Record<string, unknown>[], extra: Record<string, unknown> = {}) =>
	recipeFormSchema.safeParse({ name: 'x', intent: 'propose', steps: steps.map((s) => ({ ...emptyRow(s.op as never), ...s })), ...extra });
const issues = (r: ReturnType<typeof form>) => (r.success ? [] : r.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`));

describe('recipe form schema (built from the ops table)', () => {
	it('takes the standard recipe through rows and back unchanged, and the JSON validator agrees', () => {
		const steps = STANDARD_RECIPE(2);
		const rows = steps.map(stepToRow);
		expect(recipeFormSchema.safeParse({ name: 'standard', intent: 'propose', steps: rows }).success).toBe(true);
		expect(rows.map(rowToStep)).toEqual(steps);
		expect(parseRecipe(rows.map(rowToStep))).toEqual(steps);
	});

	it('has a field for every parameter of every op', () => {
		const row = emptyRow('orient');
		for (const o of REPAIR_OPS) for (const p of o.params) expect(row).toHaveProperty(p.key, null);
	});

	it('refuses, beside the field, what parseRecipe refuses', () => {
		expect(issues(form([{ op: 'fill-holes', maxEdges: 2 }]))).toEqual(['steps.0.maxEdges: At least 3.']);
		expect(issues(form([{ op: 'remove-small-shells', maxAreaShare: 1.5 }]))).toEqual(['steps.0.maxAreaShare: A share: at most 1.']);
		expect(issues(form([{ op: 'collapse-short-edges' }]))).toEqual(['steps.0.minLength: Required.']);
		expect(issues(form([{ op: 'weld', tolerance: 1, relativeTolerance: 1e-6 }]))[0]).toMatch(/^steps\.0\.tolerance: Give exactly one/);
		expect(issues(form([{ op: 'remove-small-shells' }]))[0]).toMatch(/^steps\.0\.maxFaces: Give at least one/);
		expect(issues(form([{ op: 'rescale', factor: -2 }]))).toEqual(['steps.0.factor: Above zero.']);
		expect(issues(form([]))).toEqual(['steps: Add at least one step.']);
		expect(issues(form([{ op: 'orient' }], { name: '', intent: 'save' }))).toEqual(['name: Give the recipe a name.']);
	});

	it('keeps only the parameters of the row\'s op when it becomes a step', () => {
		expect(rowToStep({ ...emptyRow('orient'), minLength: 3 })).toEqual({ op: 'orient' });
	});
});
