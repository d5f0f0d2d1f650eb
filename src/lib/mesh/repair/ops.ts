/**
 * The repair operations and their parameters, as data: the one definition the JSON validator
 * (parseRecipe in recipe.ts) and the recipe form's schema (src/lib/recipe-form.ts) are built from.
 * Light on purpose (no mesh code), so pages can import it.
 */
import type { RepairOp } from './recipe';

/** What a parameter measures: a length in model units, a multiple of the bounding-box diagonal, a share 0..1, a count, a plain factor. */
export type ParamKind = 'length' | 'relative' | 'share' | 'count' | 'factor';

export interface ParamDef {
	key: string;
	label: string;
	kind: ParamKind;
	required?: boolean;
	/** Whole numbers from `min` to `max`. */
	integer?: boolean;
	min?: number;
	max?: number;
}

export interface OpDef {
	op: RepairOp;
	label: string;
	params: ParamDef[];
	/** Exactly one of these must be given. */
	exactlyOne?: string[];
	/** At least one of these must be given. */
	atLeastOne?: string[];
}

export const MAX_RECIPE_STEPS = 64;

/** The largest hole (in boundary edges) fill-holes may be asked to close; see fill-holes.ts. */
export const MAX_FILL_EDGES = 1000;

export const REPAIR_OPS: readonly OpDef[] = [
	{
		op: 'weld',
		label: 'Weld close vertices',
		params: [
			{ key: 'tolerance', label: 'tolerance', kind: 'length' },
			{ key: 'relativeTolerance', label: 'tolerance × bounding-box diagonal', kind: 'relative' }
		],
		exactlyOne: ['tolerance', 'relativeTolerance']
	},
	{ op: 'remove-degenerate-faces', label: 'Remove zero-area and duplicate faces', params: [] },
	{
		op: 'split-t-junctions',
		label: 'Close T-junction slits',
		params: [{ key: 'relativeTolerance', label: 'vertex off the edge by under (× bounding-box diagonal)', kind: 'relative', required: true }]
	},
	{
		op: 'remove-small-shells',
		label: 'Remove small shells',
		params: [
			{ key: 'maxFaces', label: 'fewer faces than', kind: 'count' },
			{ key: 'maxAreaShare', label: 'area share under', kind: 'share', max: 1 },
			{ key: 'maxVolumeShare', label: 'volume share under', kind: 'share', max: 1 }
		],
		atLeastOne: ['maxFaces', 'maxAreaShare', 'maxVolumeShare']
	},
	{ op: 'split-non-manifold-vertices', label: 'Split non-manifold vertices', params: [] },
	{ op: 'orient', label: 'Orient faces outward', params: [] },
	{
		op: 'fill-holes',
		label: 'Fill holes',
		params: [
			{ key: 'maxPerimeter', label: 'perimeter up to', kind: 'length' },
			{ key: 'maxEdges', label: 'edges up to', kind: 'count', integer: true, min: 3, max: MAX_FILL_EDGES }
		]
	},
	{ op: 'collapse-short-edges', label: 'Collapse short edges', params: [{ key: 'minLength', label: 'edges shorter than', kind: 'length', required: true }] },
	{ op: 'rescale', label: 'Rescale', params: [{ key: 'factor', label: 'factor', kind: 'factor', required: true }] }
];

export const OP_BY_NAME: Readonly<Record<RepairOp, OpDef>> = Object.fromEntries(REPAIR_OPS.map((o) => [o.op, o])) as Record<RepairOp, OpDef>;

/** Every parameter name of every op, once. */
export const ALL_PARAM_KEYS: readonly string[] = [...new Set(REPAIR_OPS.flatMap((o) => o.params.map((p) => p.key)))];
