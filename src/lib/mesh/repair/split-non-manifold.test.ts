import { describe, expect, it } from 'vitest';
import { splitNonManifoldVertices } from './split-non-manifold';
import { FORMATS, inspect, roundTrip } from './test-support';
import { concat, unitCube, weldExact } from '../test-meshes';

/** Two unit cubes touching only at the corner (1, 1, 1): one pinch vertex. */
const cornerCubes = () => weldExact(concat(unitCube(), unitCube([1, 1, 1])));
/** Two unit cubes sharing the edge x = 1, y = 1: a non-manifold edge (four faces). */
const edgeCubes = () => weldExact(concat(unitCube(), unitCube([1, 1, 0])));

describe.each(FORMATS)('splitNonManifoldVertices, mesh read back from %s', (_name, write, file) => {
	it('gives the pinch vertex of two corner-touching cubes one copy per fan', () => {
		const m = roundTrip(cornerCubes(), write, file);
		expect(inspect(m).nonManifoldVertices).toBe(1);
		const r = splitNonManifoldVertices(m);
		expect(r.counts).toEqual({ verticesSplit: 1, verticesAdded: 1, nonManifoldEdgesLeft: 0 });
		const rep = inspect(r.mesh);
		expect(rep.nonManifoldVertices).toBe(0);
		expect(rep.components).toBe(2);
		expect(rep.watertight).toBe(true);
		// Euler–Poincaré per shell: two spheres, χ = 2 each.
		expect(rep.shells.map((s) => s.genus)).toEqual([0, 0]);
	});
});

describe('splitNonManifoldVertices', () => {
	it('leaves a non-manifold edge (and its two vertices) as it is and counts it', () => {
		const r = splitNonManifoldVertices(edgeCubes());
		expect(r.counts.nonManifoldEdgesLeft).toBe(1);
		expect(r.counts.verticesAdded).toBe(0);
		expect(inspect(r.mesh).nonManifoldEdges).toBe(1);
	});

	it('changes nothing on a manifold mesh', () => {
		const c = unitCube();
		const r = splitNonManifoldVertices(c);
		expect(r.counts.verticesAdded).toBe(0);
		expect(Array.from(r.mesh.indices)).toEqual(Array.from(c.indices));
	});
});
