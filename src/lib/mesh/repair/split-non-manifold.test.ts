import { describe, expect, it } from 'vitest';
import { splitNonManifoldVertices } from './split-non-manifold';
import { FORMATS, inspect, roundTrip } from '../testing/repair-support';
import { concat, unitCube, weldExact } from '../testing/test-meshes';

/** Two unit cubes touching only at the corner (1, 1, 1): one pinch vertex. */
const cornerCubes = () => weldExact(concat(unitCube(), unitCube([1, 1, 1])));
/** Two unit cubes sharing the edge x = 1, y = 1 (0 ≤ z ≤ 1): a non-manifold edge with four faces. */
const edgeCubes = () => weldExact(concat(unitCube(), unitCube([1, 1, 0])));

describe.each(FORMATS)('splitNonManifoldVertices, mesh read back from %s', (_name, write, file) => {
	it('gives the pinch vertex of two corner-touching cubes one copy per fan', () => {
		const m = roundTrip(cornerCubes(), write, file);
		expect(inspect(m).nonManifoldVertices).toBe(1);
		const r = splitNonManifoldVertices(m);
		expect(r.counts).toEqual({ verticesSplit: 1, verticesAdded: 1, nonManifoldEdgesSplit: 0, nonManifoldEdgesLeft: 0 });
		const rep = inspect(r.mesh);
		expect(rep.nonManifoldVertices).toBe(0);
		expect(rep.components).toBe(2);
		expect(rep.watertight).toBe(true);
		// Euler–Poincaré per shell: two spheres, χ = 2 each.
		expect(rep.shells.map((s) => s.genus)).toEqual([0, 0]);
	});

	it('separates two blocks that share an edge into two closed manifold shells', () => {
		const m = roundTrip(edgeCubes(), write, file);
		expect(inspect(m).nonManifoldEdges).toBe(1);
		const rep = inspect(splitNonManifoldVertices(m).mesh);
		expect(rep.nonManifoldEdges).toBe(0);
		expect(rep.nonManifoldVertices).toBe(0);
		expect(rep.components).toBe(2);
		expect(rep.watertight).toBe(true);
	});
});

describe('splitNonManifoldVertices', () => {
	it('separates the shared edge of two blocks touching along it, giving each block its own closed surface', () => {
		const m = edgeCubes();
		expect(inspect(m).nonManifoldEdges).toBe(1);
		const r = splitNonManifoldVertices(m);
		expect(r.counts).toEqual({ verticesSplit: 2, verticesAdded: 2, nonManifoldEdgesSplit: 1, nonManifoldEdgesLeft: 0 });
		const rep = inspect(r.mesh);
		expect(rep.nonManifoldEdges).toBe(0);
		expect(rep.nonManifoldVertices).toBe(0);
		expect(rep.components).toBe(2);
		expect(rep.watertight).toBe(true);
		expect(rep.shells.map((s) => s.genus)).toEqual([0, 0]);
	});

	it('leaves a fin (three faces on one edge) as it is and counts it', () => {
		const c = unitCube();
		const positions = new Float64Array(c.positions.length + 3);
		positions.set(c.positions);
		positions.set([0.5, 0.5, 2], c.positions.length); // fin on the top edge 6–7 (y = 1, z = 1)
		const indices = new Uint32Array(c.indices.length + 3);
		indices.set(c.indices);
		indices.set([6, 7, 8], c.indices.length);
		const r = splitNonManifoldVertices({ positions, indices });
		expect(r.counts.nonManifoldEdgesLeft).toBe(1);
		expect(r.counts.nonManifoldEdgesSplit).toBe(0);
		expect(r.counts.verticesAdded).toBe(0);
	});

	it('changes nothing on a manifold mesh', () => {
		const c = unitCube();
		const r = splitNonManifoldVertices(c);
		expect(r.counts.verticesAdded).toBe(0);
		expect(Array.from(r.mesh.indices)).toEqual(Array.from(c.indices));
	});
});
