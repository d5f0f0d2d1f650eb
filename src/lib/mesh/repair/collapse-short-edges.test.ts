import { describe, expect, it } from 'vitest';
import { collapseShortEdges } from './collapse-short-edges';
import { meshDeviation } from './deviation';
import { FORMATS, implicitMesh, inspect, roundTrip } from '../testing/repair-support';
import { towBody } from '../testing/implicit-shapes';
import { icosphere, plateWithHoles, unitCube } from '../testing/test-meshes';

const CELL = 0.1;

describe.each(FORMATS)('collapseShortEdges, mesh read back from %s', (_name, write, file) => {
	it('removes the very short edges marching cubes leaves, keeping the tow body closed, genus 0 and free of self-intersections', () => {
		const clean = implicitMesh(towBody(1), CELL);
		const m = roundTrip(clean, write, file);
		const minLength = 0.1 * CELL;
		const before = inspect(m, minLength);
		expect(before.shortEdges).toBeGreaterThan(100);
		const r = collapseShortEdges(m, minLength);
		expect(r.counts.edgesCollapsed).toBeGreaterThan(100);
		const rep = inspect(r.mesh, minLength);
		expect(rep.shortEdges).toBe(r.counts.shortEdgesLeft);
		expect(rep.shortEdges).toBeLessThan(before.shortEdges / 10);
		expect(rep.watertight).toBe(true);
		expect(rep.genus).toBe(0);
		expect(rep.consistentlyOriented).toBe(true);
		expect(rep.selfIntersectingPairs).toBe(0);
		expect(rep.degenerateFaces).toBe(0);
		// Stated tolerance: volume within 0.1 %, Hausdorff distance below minLength.
		expect(Math.abs(rep.volume! - before.volume!) / before.volume!).toBeLessThan(0.001);
		expect(meshDeviation(r.mesh, m).hausdorff).toBeLessThan(minLength);
	});
});

describe('collapseShortEdges', () => {
	it('refuses collapses on a boundary and counts them', () => {
		const plate = plateWithHoles(1);
		const r = collapseShortEdges(plate, 0.5);
		// Edges are all of length 1 (or √2): nothing is short.
		expect(r.counts.edgesCollapsed).toBe(0);
		expect(r.counts.shortEdgesLeft).toBe(0);
		const cube = unitCube();
		// Remove the top: its rim edges become boundary; make one rim edge short.
		const open = { positions: cube.positions.slice(), indices: Uint32Array.from(Array.from(cube.indices).filter((_, i) => i < 6 || i >= 12)) };
		open.positions[3 * 5] = 0.01; // vertex 5 = (1, 0, 1) moves to (0.01, 0, 1), near vertex 4 = (0, 0, 1)
		const b = collapseShortEdges(open, 0.1);
		expect(b.counts.edgesCollapsed).toBe(0);
		expect(b.counts.skipped.boundaryOrNonManifold).toBeGreaterThan(0);
	});

	it('refuses the collapse of a tetrahedron edge (link condition) and leaves the tetrahedron closed', () => {
		const positions = Float64Array.from([0, 0, 0, 0.01, 0, 0, 0, 1, 0, 0, 0, 1]);
		const indices = Uint32Array.from([0, 2, 1, 0, 1, 3, 0, 3, 2, 1, 2, 3]);
		const r = collapseShortEdges({ positions, indices }, 0.1);
		expect(r.counts.edgesCollapsed).toBe(0);
		expect(r.counts.skipped.linkCondition).toBe(1);
		expect(inspect(r.mesh).watertight).toBe(true);
	});

	it('refuses a collapse whose midpoint would turn a neighbour face over', () => {
		// Icosphere: pick vertex u, a neighbour v and a face (u, x, y) of u without v. Put u just
		// inside edge x–y and v just beyond it: the midpoint of u–v lies past x–y, so (m, x, y) flips.
		const m = icosphere(1);
		const p = m.positions, ix = m.indices;
		const u = ix[0];
		const faces = [] as number[];
		for (let t = 0; t < ix.length / 3; t++) if (ix[3 * t] === u || ix[3 * t + 1] === u || ix[3 * t + 2] === u) faces.push(t);
		const f = faces[0];
		const [x, y] = [0, 1, 2].map((k) => ix[3 * f + k]).filter((w) => w !== u) as [number, number];
		// v: a neighbour of u other than x and y.
		let v = -1;
		for (const t of faces) for (let k = 0; k < 3; k++) { const w = ix[3 * t + k]; if (w !== u && w !== x && w !== y) v = w; }
		const mid = [0, 1, 2].map((d) => (p[3 * x + d] + p[3 * y + d]) / 2);
		const inward = [0, 1, 2].map((d) => p[3 * u + d] - mid[d]);
		const q = p.slice();
		for (let d = 0; d < 3; d++) {
			q[3 * u + d] = mid[d] + 0.01 * inward[d];
			q[3 * v + d] = mid[d] - 0.03 * inward[d];
		}
		const uvLength = Math.hypot(...[0, 1, 2].map((d) => q[3 * u + d] - q[3 * v + d]));
		const r = collapseShortEdges({ positions: q, indices: ix }, 1.01 * uvLength);
		expect(r.counts.edgesCollapsed).toBe(0);
		expect(r.counts.skipped.normalFlip).toBeGreaterThanOrEqual(1);
	});

	it('refuses some collapses on a coarse tow body (link condition or normal checks) and keeps it closed and free of self-intersections', () => {
		const clean = implicitMesh(towBody(1), CELL);
		const r = collapseShortEdges(clean, 0.5 * CELL);
		expect(r.counts.skipped.normalFlip + r.counts.skipped.linkCondition + r.counts.skipped.degenerateFace).toBeGreaterThan(0);
		const rep = inspect(r.mesh);
		expect(rep.watertight).toBe(true);
		expect(rep.selfIntersectingPairs).toBe(0);
	});
});
