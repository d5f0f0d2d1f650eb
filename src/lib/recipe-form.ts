// The repair-recipe form: one row per step (its op and the parameters of that op), validated by a
// zod schema built from the operations' parameter definitions (src/lib/mesh/repair/ops.ts). The
// server checks the resulting steps once more with parseRecipe, the validator JSON recipes go through.
import { z } from 'zod';
import { ALL_PARAM_KEYS, MAX_RECIPE_STEPS, OP_BY_NAME, REPAIR_OPS, type ParamDef } from './mesh/repair/ops';
import type { RepairOp, RepairStep } from './mesh/repair/recipe';

const OPS = REPAIR_OPS.map((o) => o.op) as [RepairOp, ...RepairOp[]];
const DEF_BY_KEY = new Map<string, ParamDef>(REPAIR_OPS.flatMap((o) => o.params.map((p) => [p.key, p] as const)));

/** A parameter's field: empty (null) or a number within its definition's bounds. */
function paramField(p: ParamDef) {
	let s = z.number('A number, or empty.');
	if (p.integer) s = s.int('A whole number.').min(p.min ?? 1, `At least ${p.min ?? 1}.`);
	else s = s.positive('Above zero.');
	if (p.max !== undefined) s = s.max(p.max, p.kind === 'share' ? 'A share: at most 1.' : `At most ${p.max}.`);
	return s.nullable().default(null);
}

const given = (v: unknown) => typeof v === 'number';

export const recipeRowSchema = z
	.object({
		op: z.enum(OPS),
		...(Object.fromEntries(ALL_PARAM_KEYS.map((k) => [k, paramField(DEF_BY_KEY.get(k)!)])) as Record<string, ReturnType<typeof paramField>>)
	})
	.superRefine((row, ctx) => {
		const def = OP_BY_NAME[row.op];
		const r = row as Record<string, unknown>;
		for (const p of def.params) if (p.required && !given(r[p.key])) ctx.addIssue({ code: 'custom', path: [p.key], message: 'Required.' });
		const labels = (keys: string[]) => keys.map((k) => DEF_BY_KEY.get(k)!.label).join(' or ');
		if (def.exactlyOne && def.exactlyOne.filter((k) => given(r[k])).length !== 1) {
			ctx.addIssue({ code: 'custom', path: [def.exactlyOne[0]], message: `Give exactly one: ${labels(def.exactlyOne)}.` });
		}
		if (def.atLeastOne && !def.atLeastOne.some((k) => given(r[k]))) {
			ctx.addIssue({ code: 'custom', path: [def.atLeastOne[0]], message: `Give at least one: ${labels(def.atLeastOne)}.` });
		}
	});
export type RecipeRow = { op: RepairOp } & Record<string, number | null>;

export const recipeFormSchema = z
	.object({
		name: z.string().trim().max(120, 'At most 120 characters.').default(''),
		/** Which button was pressed: propose a repair of this revision, or save the recipe on the project. */
		intent: z.enum(['propose', 'save']).default('propose'),
		steps: z.array(recipeRowSchema).min(1, 'Add at least one step.').max(MAX_RECIPE_STEPS, `At most ${MAX_RECIPE_STEPS} steps.`)
	})
	.refine((f) => f.intent !== 'save' || f.name.length > 0, { message: 'Give the recipe a name.', path: ['name'] });
export type RecipeForm = z.infer<typeof recipeFormSchema>;

/** A step as a form row: every parameter field present, empty unless the step sets it. */
export function stepToRow(step: RepairStep): RecipeRow {
	const row = { op: step.op } as RecipeRow;
	for (const k of ALL_PARAM_KEYS) row[k] = null;
	for (const [k, v] of Object.entries(step)) if (k !== 'op' && typeof v === 'number') row[k] = v;
	return row;
}

/** A form row as a step: only the parameters of its op, and only those given. */
export function rowToStep(row: { op: RepairOp } & Record<string, unknown>): RepairStep {
	const step: Record<string, unknown> = { op: row.op };
	for (const p of OP_BY_NAME[row.op].params) if (typeof row[p.key] === 'number') step[p.key] = row[p.key];
	return step as RepairStep;
}

export const emptyRow = (op: RepairOp): RecipeRow => stepToRow({ op } as RepairStep);
