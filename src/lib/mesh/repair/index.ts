/** Repair operations: pure functions from mesh to new mesh plus counts; the input is never changed. */
export { RepairError, type RepairResult } from './common';
export { weldByTolerance, type WeldCounts } from './weld-tolerance';
export { removeDegenerateAndDuplicateFaces, type DegenerateCounts } from './remove-degenerate';
export { orientConsistently, type OrientCounts } from './orient';
export { removeSmallShells, type SmallShellOptions, type SmallShellCounts } from './remove-small-shells';
export { fillHoles, DEFAULT_MAX_HOLE_EDGES, MAX_HOLE_EDGES, type FillHoleOptions, type FillHoleCounts, type HoleLeft, type HoleLeftReason } from './fill-holes';
export { collapseShortEdges, MIN_NORMAL_COS, type CollapseCounts } from './collapse-short-edges';
export { rescale, type RescaleCounts } from './rescale';
export { splitNonManifoldVertices, type SplitCounts } from './split-non-manifold';
export { splitTJunctions, type TJunctionCounts } from './split-t-junctions';
export { boundaryHalfedgeLoops, type HalfedgeLoops } from './boundary-loops';
export { meshDeviation, MAX_AREA_SAMPLES, type MeshDeviation, type OneSidedDeviation, type DeviationOptions } from './deviation';
export {
	applyRecipe,
	applyStep,
	parseRecipe,
	STANDARD_RECIPE,
	MAX_RECIPE_STEPS,
	type RepairStep,
	type RepairOp,
	type RepairLogEntry,
	type RecipeResult
} from './recipe';
export { areaAndVolume, sameMesh, judgeRepair, type ChangeMeasures, type RepairLimits, type LimitLine, type LimitJudgement } from './change-measures';
export { skippedItems, recipeScaleFactor } from './skipped';
export { REPAIR_OPS, OP_BY_NAME, ALL_PARAM_KEYS, type OpDef, type ParamDef, type ParamKind } from './ops';
