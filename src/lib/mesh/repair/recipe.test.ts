import { beforeAll, describe, expect, it } from 'vitest';
import Module from 'manifold-3d';
import { applyRecipe, applyStep, parseRecipe, STANDARD_RECIPE, type RepairStep } from './recipe';
import { meshDeviation } from './deviation';
import { defectiveMesh, FORMATS, inspect, manifoldVerdict, roundTrip } from '../testing/repair-support';
import { sphere, towBody, keelBulb } from '../testing/implicit-shapes';
import { concat, unitCube, weldExact } from '../testing/test-meshes';
import { expectClose } from '../testing/test-close';

let wasm: Awaited<ReturnType<typeof Module>>;
beforeAll(async () => {
	wasm = await Module();
	wasm.setup();
});

const CELL = 0.1;
const SHAPES = [
	['tow body', () => towBody(1)],
	['sphere', () => sphere(1)],
	['keel bulb', () => keelBulb(2)]
] as const;

describe.each(FORMATS)('standard recipe on a mesh read back from %s', (_fmt, write, file) => {
	it.each(SHAPES)('%s with holes, a flipped patch, a 1e-7 seam and specks ends closed, outward and manifold (engine and manifold-3d 3.5)', (_name, shape) => {
		const { clean, broken } = defectiveMesh(shape(), CELL);
		const m = roundTrip(broken, write, file);
		const before = inspect(m);
		expect(before.boundaryEdges).toBeGreaterThan(0);
		expect(before.components).toBeGreaterThan(1);
		expect(before.consistentlyOriented).toBe(false);
		const { mesh, log } = applyRecipe(m, STANDARD_RECIPE(CELL));
		expect(log.map((e) => e.op)).toEqual([
			'weld', 'remove-degenerate-faces', 'split-t-junctions', 'remove-small-shells', 'split-non-manifold-vertices',
			'orient', 'fill-holes', 'collapse-short-edges', 'orient'
		]);
		const rep = inspect(mesh);
		// The engine's verdict.
		expect(rep.boundaryEdges).toBe(0);
		expect(rep.nonManifoldEdges).toBe(0);
		expect(rep.nonManifoldVertices).toBe(0);
		expect(rep.consistentlyOriented).toBe(true);
		expect(rep.volume).toBeGreaterThan(0);
		expect(rep.components).toBe(1);
		expect(rep.genus).toBe(0);
		expect(rep.selfIntersectingPairs).toBe(0);
		// manifold-3d's verdict: accepted as a closed manifold, same genus and volume.
		const ref = manifoldVerdict(wasm, mesh);
		expect(ref.status).toBe('NoError');
		expect(ref.genus).toBe(0);
		expectClose(ref.volume!, rep.volume!, 1e-5, 'manifold-3d volume (float32 copy)');
		// Stated tolerances against the clean surface: |ΔV|/V < 1 %, Hausdorff < 2 cells (hole edges are about one cell).
		const cleanVolume = inspect(clean).volume;
		expect(Math.abs(rep.volume! - cleanVolume!) / cleanVolume!).toBeLessThan(0.01);
		expect(meshDeviation(mesh, clean).hausdorff).toBeLessThan(2 * CELL);
	});
});

describe('standard recipe on bodies that touch', () => {
	it.each([
		['two blocks sharing an edge', [1, 1, 0]],
		['two blocks sharing a corner', [1, 1, 1]]
	] as [string, [number, number, number]][])('%s: separated into two closed shells that manifold-3d 3.5 accepts', (_name, offset) => {
		const m = weldExact(concat(unitCube(), unitCube(offset)));
		const before = inspect(m);
		expect(before.nonManifoldEdges + before.nonManifoldVertices).toBeGreaterThan(0);
		const { mesh } = applyRecipe(m, STANDARD_RECIPE(0.1));
		const rep = inspect(mesh);
		expect(rep.nonManifoldEdges).toBe(0);
		expect(rep.nonManifoldVertices).toBe(0);
		expect(rep.watertight).toBe(true);
		expect(rep.volume).toBe(2);
		const ref = manifoldVerdict(wasm, mesh);
		expect(ref.status).toBe('NoError');
		expect(ref.volume).toBeCloseTo(2, 12);
		// Two spheres: χ = 4, and manifold-3d reports genus 1 − χ/2 = −1 for the pair.
		expect(ref.genus).toBe(-1);
	});
});

describe('applyRecipe', () => {
	it('logs each step with its parameters, counts and time, and leaves the input unchanged', () => {
		const { broken } = defectiveMesh(sphere(1), 0.15);
		const copy = broken.indices.slice();
		const { log } = applyRecipe(broken, STANDARD_RECIPE(0.15));
		expect(Array.from(broken.indices)).toEqual(Array.from(copy));
		const weld = log[0];
		expect(weld.params.relativeTolerance).toBe(1e-6);
		expect(weld.params.resolvedTolerance as number).toBeGreaterThan(0);
		expect((weld.counts as { verticesMerged: number }).verticesMerged).toBeGreaterThan(0);
		// The defects are real holes, not slits: nothing is split.
		expect((log[2].counts as { junctions: number }).junctions).toBe(0);
		expect((log[3].counts as { shellsRemoved: number }).shellsRemoved).toBe(3);
		const fill = log[6].counts as { holesFilled: number; holesLeft: unknown[] };
		expect(fill.holesFilled).toBeGreaterThanOrEqual(3);
		expect(fill.holesLeft).toEqual([]);
		for (const e of log) expect(e.ms).toBeGreaterThanOrEqual(0);
	});

	it('never changes the input buffers, step by step', () => {
		const { broken } = defectiveMesh(sphere(1), 0.2);
		const pos = broken.positions.slice(), idx = broken.indices.slice();
		for (const step of STANDARD_RECIPE(0.2)) {
			const r = applyStep(broken, step);
			expect(r.mesh.positions).not.toBe(broken.positions);
			expect(r.mesh.indices).not.toBe(broken.indices);
			expect(Array.from(broken.positions)).toEqual(Array.from(pos));
			expect(Array.from(broken.indices)).toEqual(Array.from(idx));
		}
	});

	it('runs an empty recipe as a copy', () => {
		const c = unitCube();
		const r = applyRecipe(c, []);
		expect(r.mesh.indices).not.toBe(c.indices);
		expect(r.log).toEqual([]);
	});
});

describe('parseRecipe', () => {
	it('accepts the standard recipe as JSON text', () => {
		const steps = STANDARD_RECIPE(0.01);
		expect(parseRecipe(JSON.stringify(steps))).toEqual(steps);
	});

	it.each([
		['{', /not valid JSON/],
		[{ op: 'weld' }, /must be a list of steps/],
		[[{ op: 'smooth' }], /step 1: unknown op "smooth"; expected one of weld,/],
		[[{ op: 'orient', strength: 2 }], /step 1 \(orient\): unknown field "strength"; this op takes no parameters/],
		[[{ op: 'orient' }, { op: 'collapse-short-edges' }], /step 2 \(collapse-short-edges\): "minLength" is required/],
		[[{ op: 'weld', tolerance: 1e-3, relativeTolerance: 1e-6 }], /give exactly one of "tolerance"/],
		[[{ op: 'weld', tolerance: -1 }], /"tolerance" must be a positive finite number, got -1/],
		[[{ op: 'fill-holes', maxEdges: 2.5 }], /"maxEdges" must be a whole number from 3 to 1000/],
		[[{ op: 'remove-small-shells' }], /give at least one of maxFaces/],
		[[{ op: 'remove-small-shells', maxAreaShare: 5 }], /"maxAreaShare" is a share, at most 1/],
		[[null], /step 1 must be an object/]
	] as [unknown, RegExp][])('refuses %j with a clear message', (input, message) => {
		expect(() => parseRecipe(input)).toThrow(message);
	});

	it('refuses more than 64 steps', () => {
		const many: RepairStep[] = Array.from({ length: 65 }, () => ({ op: 'orient' }));
		expect(() => parseRecipe(many)).toThrow(/65 steps, more than the limit of 64/);
	});
});
