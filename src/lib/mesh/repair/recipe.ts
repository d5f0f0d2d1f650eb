/**
 * Repair recipes: an ordered list of steps, a plain validator for recipes that arrive as JSON, the
 * standard recipe, and the runner that applies the steps and logs what each one did.
 */
import { bboxDiagonal, RepairError } from './common';
import { collapseShortEdges } from './collapse-short-edges';
import { fillHoles, MAX_HOLE_EDGES } from './fill-holes';
import { orientConsistently } from './orient';
import { removeDegenerateAndDuplicateFaces } from './remove-degenerate';
import { removeSmallShells } from './remove-small-shells';
import { splitNonManifoldVertices } from './split-non-manifold';
import { splitTJunctions } from './split-t-junctions';
import { weldByTolerance } from './weld-tolerance';
import { rescale } from './rescale';
import { MAX_RECIPE_STEPS, REPAIR_OPS } from './ops';
import type { MeshBuffers } from '../types';

/** Lengths are in model units unless the name says relative (then × bounding-box diagonal). */
export type RepairStep =
	| { op: 'weld'; tolerance: number }
	| { op: 'weld'; relativeTolerance: number }
	| { op: 'remove-degenerate-faces' }
	| { op: 'split-t-junctions'; relativeTolerance: number }
	| { op: 'remove-small-shells'; maxFaces?: number; maxAreaShare?: number; maxVolumeShare?: number }
	| { op: 'split-non-manifold-vertices' }
	| { op: 'orient' }
	| { op: 'fill-holes'; maxPerimeter?: number; maxEdges?: number }
	| { op: 'collapse-short-edges'; minLength: number }
	| { op: 'rescale'; factor: number };

export type RepairOp = RepairStep['op'];

export interface RepairLogEntry {
	op: RepairOp;
	/** The step as given, plus any length it resolved (e.g. the weld tolerance in model units). */
	params: Record<string, number | string>;
	/** What the operation reports (its counts object). */
	counts: unknown;
	facesBefore: number;
	facesAfter: number;
	ms: number;
}

export interface RecipeResult {
	mesh: MeshBuffers;
	log: RepairLogEntry[];
}

export { MAX_RECIPE_STEPS } from './ops';

/** Allowed parameters per op: name → whether required (from the one table in ops.ts). */
const PARAMS: Record<RepairOp, Record<string, boolean>> = Object.fromEntries(
	REPAIR_OPS.map((o) => [o.op, Object.fromEntries(o.params.map((p) => [p.key, !!p.required]))])
) as Record<RepairOp, Record<string, boolean>>;

/**
 * Checks a recipe given as JSON text or as already-parsed data, and returns it typed. Throws a
 * RepairError naming the step and the field at fault.
 */
export function parseRecipe(json: unknown): RepairStep[] {
	let data = json;
	if (typeof json === 'string') {
		try {
			data = JSON.parse(json);
		} catch (e) {
			throw new RepairError(`recipe is not valid JSON: ${(e as Error).message}`);
		}
	}
	if (!Array.isArray(data)) throw new RepairError('recipe must be a list of steps');
	if (data.length > MAX_RECIPE_STEPS) throw new RepairError(`recipe has ${data.length} steps, more than the limit of ${MAX_RECIPE_STEPS}`);
	const ops = Object.keys(PARAMS).join(', ');
	return data.map((raw, i): RepairStep => {
		const where = `recipe step ${i + 1}`;
		if (typeof raw !== 'object' || raw === null || Array.isArray(raw)) throw new RepairError(`${where} must be an object with an "op" field`);
		const step = raw as Record<string, unknown>;
		const op = step.op;
		if (typeof op !== 'string' || !(op in PARAMS)) throw new RepairError(`${where}: unknown op ${JSON.stringify(op)}; expected one of ${ops}`);
		const allowed = PARAMS[op as RepairOp];
		for (const key of Object.keys(step)) {
			if (key === 'op') continue;
			if (!(key in allowed)) {
				const names = Object.keys(allowed);
				throw new RepairError(`${where} (${op}): unknown field "${key}"${names.length ? `; allowed: ${names.join(', ')}` : '; this op takes no parameters'}`);
			}
			const v = step[key];
			if (typeof v !== 'number' || !Number.isFinite(v) || v <= 0) {
				throw new RepairError(`${where} (${op}): "${key}" must be a positive finite number, got ${JSON.stringify(v)}`);
			}
		}
		for (const [key, required] of Object.entries(allowed)) {
			if (required && step[key] === undefined) throw new RepairError(`${where} (${op}): "${key}" is required`);
		}
		if (op === 'weld' && (step.tolerance === undefined) === (step.relativeTolerance === undefined)) {
			throw new RepairError(`${where} (weld): give exactly one of "tolerance" (model units) or "relativeTolerance" (× bounding-box diagonal)`);
		}
		if (op === 'remove-small-shells' && step.maxFaces === undefined && step.maxAreaShare === undefined && step.maxVolumeShare === undefined) {
			throw new RepairError(`${where} (remove-small-shells): give at least one of maxFaces, maxAreaShare, maxVolumeShare`);
		}
		for (const share of ['maxAreaShare', 'maxVolumeShare']) {
			if (typeof step[share] === 'number' && (step[share] as number) > 1) throw new RepairError(`${where} (${op}): "${share}" is a share, at most 1`);
		}
		if (op === 'fill-holes' && step.maxEdges !== undefined && (!Number.isInteger(step.maxEdges) || (step.maxEdges as number) < 3 || (step.maxEdges as number) > MAX_HOLE_EDGES)) {
			throw new RepairError(`${where} (fill-holes): "maxEdges" must be a whole number from 3 to ${MAX_HOLE_EDGES}`);
		}
		return { ...step } as RepairStep;
	});
}

/**
 * The standard recipe for a mesh meshed at about `targetCellSize` (model units; e.g. the
 * marching-cubes cell or the intended CFD surface cell):
 * 1. weld within 1e-6 × bbox diagonal (far above float noise of exported seams, far below a cell);
 * 2. remove degenerate and duplicate faces;
 * 3. close T-junction slits: split boundary edges at boundary vertices within 1e-6 × bbox diagonal
 *    of them (split-t-junctions.ts; nothing moves), before a slit could be filled with slivers;
 * 4. remove shells under 0.1 % of the total area (the largest shell always stays);
 * 5. split pinch vertices (and non-manifold edges where bodies touch along them, see split-non-manifold.ts);
 * 6. orient outward;
 * 7. fill holes with a perimeter up to 40 cells and at most 200 edges: a marching-cubes boundary
 *    zig-zags, so its perimeter is about 1.6 × that of the round opening (measured on the test
 *    shapes), and 40 cells covers openings up to about 8 cells across;
 * 8. collapse edges shorter than 0.02 cells;
 * 9. orient again (filling and collapsing keep orientation; this is a cheap check that costs O(F)).
 * The multipliers are choices of this product (common practice in spirit), not from a source.
 * The weld merges any two vertices closer than its tolerance, so on very fine grids it also closes
 * the tiniest marching-cubes edges (clamped at 1e-4 cells) without the checks of step 8; faces
 * that collapse are dropped and the later steps clean up duplicates and pinches.
 */
export function STANDARD_RECIPE(targetCellSize: number): RepairStep[] {
	if (!(targetCellSize > 0) || !Number.isFinite(targetCellSize)) {
		throw new RepairError(`standard recipe: the target cell size must be a positive number, got ${targetCellSize}`);
	}
	return [
		{ op: 'weld', relativeTolerance: 1e-6 },
		{ op: 'remove-degenerate-faces' },
		{ op: 'split-t-junctions', relativeTolerance: 1e-6 },
		{ op: 'remove-small-shells', maxAreaShare: 0.001 },
		{ op: 'split-non-manifold-vertices' },
		{ op: 'orient' },
		{ op: 'fill-holes', maxPerimeter: 40 * targetCellSize, maxEdges: 200 },
		{ op: 'collapse-short-edges', minLength: 0.02 * targetCellSize },
		{ op: 'orient' }
	];
}

/** Runs one step. */
export function applyStep(mesh: MeshBuffers, step: RepairStep): { mesh: MeshBuffers; counts: unknown; params: Record<string, number | string> } {
	const params: Record<string, number | string> = { ...(step as unknown as Record<string, number | string>) };
	switch (step.op) {
		case 'weld': {
			const tol = 'tolerance' in step ? step.tolerance : step.relativeTolerance * bboxDiagonal(mesh);
			params.resolvedTolerance = tol;
			if (!(tol > 0)) {
				// Empty or single-point mesh: nothing to weld, but still a new mesh.
				return { mesh: { positions: mesh.positions.slice(), indices: mesh.indices.slice() }, counts: { verticesMerged: 0, facesDropped: 0 }, params };
			}
			return { ...weldByTolerance(mesh, tol), params };
		}
		case 'remove-degenerate-faces':
			return { ...removeDegenerateAndDuplicateFaces(mesh), params };
		case 'split-t-junctions': {
			const tol = step.relativeTolerance * bboxDiagonal(mesh);
			params.resolvedTolerance = tol;
			return { ...splitTJunctions(mesh, tol), params };
		}
		case 'remove-small-shells':
			return { ...removeSmallShells(mesh, step), params };
		case 'split-non-manifold-vertices':
			return { ...splitNonManifoldVertices(mesh), params };
		case 'orient':
			return { ...orientConsistently(mesh), params };
		case 'fill-holes':
			return { ...fillHoles(mesh, step), params };
		case 'collapse-short-edges':
			return { ...collapseShortEdges(mesh, step.minLength), params };
		case 'rescale':
			return { ...rescale(mesh, step.factor), params };
	}
}

/** Applies the steps in order to a copy; the input mesh is never changed. */
export function applyRecipe(mesh: MeshBuffers, steps: RepairStep[]): RecipeResult {
	const checked = parseRecipe(steps);
	const log: RepairLogEntry[] = [];
	let current = mesh;
	for (const step of checked) {
		const t0 = performance.now();
		const facesBefore = current.indices.length / 3;
		const r = applyStep(current, step);
		current = r.mesh;
		log.push({ op: step.op, params: r.params, counts: r.counts, facesBefore, facesAfter: current.indices.length / 3, ms: performance.now() - t0 });
	}
	if (current === mesh) current = { positions: mesh.positions.slice(), indices: mesh.indices.slice() }; // empty recipe
	return { mesh: current, log };
}
