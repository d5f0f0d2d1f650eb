import { describe, expect, it } from 'vitest';
import { fillHoles } from './fill-holes';
import { buildEdges } from '../edges';
import { meshDeviation } from './deviation';
import { FORMATS, facesNear, implicitMesh, inspect, roundTrip, surfacePoint } from '../testing/repair-support';
import { sphere, towBody } from '../testing/implicit-shapes';
import { concat, flipFaces, icosphere, unitCube, withoutFaces } from '../testing/test-meshes';
import type { MeshBuffers } from '../types';

const CELL = 0.12;

function holedTowBody(): { clean: MeshBuffers; holed: MeshBuffers } {
	const clean = implicitMesh(towBody(1), CELL);
	const drop = [
		...facesNear(clean, surfacePoint(clean, [0, 0, 1]), 0.2),
		...facesNear(clean, surfacePoint(clean, [1, 0.2, 0]), 0.15),
		...facesNear(clean, surfacePoint(clean, [-1, -0.3, -0.2]), 0.25)
	];
	return { clean, holed: withoutFaces(clean, drop) };
}

describe.each(FORMATS)('fillHoles, mesh read back from %s', (_name, write, file) => {
	it('closes three holes in a tow body with consistently wound, non-intersecting patches close to the original surface', () => {
		const { clean, holed } = holedTowBody();
		const m = roundTrip(holed, write, file);
		const before = inspect(m);
		expect(before.boundaryLoops).toBe(3);
		const r = fillHoles(m);
		expect(r.counts.holesFilled).toBe(3);
		expect(r.counts.holesLeft).toEqual([]);
		const rep = inspect(r.mesh);
		expect(rep.boundaryEdges).toBe(0);
		expect(rep.nonManifoldEdges).toBe(0);
		expect(rep.consistentlyOriented).toBe(true);
		expect(rep.selfIntersectingPairs).toBe(0);
		expect(rep.genus).toBe(0);
		// Stated tolerance: volume within 1 % of the clean mesh, Hausdorff distance under one cell
		// (the patch spans the hole with flat triangles; the sagitta is far below a cell here).
		const cleanRep = inspect(clean);
		expect(Math.abs(rep.volume! - cleanRep.volume!) / cleanRep.volume!).toBeLessThan(0.01);
		expect(meshDeviation(r.mesh, clean).hausdorff).toBeLessThan(CELL);
	});
});

describe('fillHoles', () => {
	it('fills a missing cube face with two triangles wound like their neighbours (volume back to 1)', () => {
		const r = fillHoles(withoutFaces(unitCube(), [2, 3]));
		expect(r.counts).toEqual({ holesFilled: 1, trianglesAdded: 2, holesLeft: [] });
		const rep = inspect(r.mesh);
		expect(rep.watertight).toBe(true);
		expect(rep.volume).toBe(1);
	});

	it('leaves holes above the edge or perimeter limits and says why, with the loop centroid', () => {
		const clean = icosphere(3);
		const holed = withoutFaces(clean, facesNear(clean, [0, 0, 1], 0.35));
		const few = fillHoles(holed, { maxEdges: 5 });
		expect(few.counts.holesFilled).toBe(0);
		expect(few.counts.holesLeft).toHaveLength(1);
		expect(few.counts.holesLeft[0].reason).toBe('too-many-edges');
		expect(few.counts.holesLeft[0].centroid[2]).toBeGreaterThan(0.9);
		const short = fillHoles(holed, { maxPerimeter: 0.1 });
		expect(short.counts.holesLeft[0].reason).toBe('perimeter-too-long');
		expect(short.mesh.indices.length).toBe(holed.indices.length);
	});

	it('undoes a patch that would cut through another body poking out of the hole', () => {
		// Cube with its top (z = 1) open, and a small closed box standing up through the opening.
		const open = withoutFaces(unitCube(), [2, 3]);
		const post = unitCube();
		for (let v = 0; v < 8; v++) {
			post.positions[3 * v] = 0.4 + 0.2 * post.positions[3 * v];
			post.positions[3 * v + 1] = 0.4 + 0.2 * post.positions[3 * v + 1];
			post.positions[3 * v + 2] = 0.8 + 0.4 * post.positions[3 * v + 2];
		}
		const r = fillHoles(concat(open, post));
		expect(r.counts.holesFilled).toBe(0);
		expect(r.counts.holesLeft.map((h) => h.reason)).toEqual(['patch-intersects-mesh']);
		expect(r.counts.trianglesAdded).toBe(0);
	});

	it('splits a loop that passes twice through one vertex and fills both parts without a non-manifold edge', () => {
		const clean = icosphere(3);
		// Faces 4 and 50, 51 of this icosphere touch only at vertex 165: one loop through it twice.
		const r = fillHoles(withoutFaces(clean, [4, 50, 51]));
		const rep = inspect(r.mesh);
		expect(rep.boundaryEdges).toBe(0);
		expect(rep.nonManifoldEdges).toBe(0);
		expect(rep.selfIntersectingPairs).toBe(0);
	});

	it('leaves a hole whose rim is wound inconsistently as an open chain (orient first)', () => {
		const clean = icosphere(2);
		const hole = facesNear(clean, [0, 0, 1], 0.3);
		const holed = withoutFaces(clean, hole);
		// Flip one face on the rim: its boundary halfedge now runs against the others.
		const et = buildEdges(holed.indices, holed.positions.length / 3);
		let rim = -1;
		for (let e = 0; e < et.edgeCount && rim < 0; e++) if (et.edgeStart[e + 1] - et.edgeStart[e] === 1) rim = (et.heSorted[et.edgeStart[e]] / 3) | 0;
		const r = fillHoles(flipFaces(holed, [rim]));
		expect(r.counts.holesFilled).toBe(0);
		// The rim breaks into pieces where the winding turns; each piece is reported.
		expect(r.counts.holesLeft.length).toBeGreaterThan(0);
		expect(r.counts.holesLeft.every((h) => h.reason === 'open-chain')).toBe(true);
	});

	it('fills nothing and copies the mesh when it is closed', () => {
		const s = implicitMesh(sphere(1), 0.2);
		const r = fillHoles(s);
		expect(r.counts.holesFilled).toBe(0);
		expect(r.mesh.indices).not.toBe(s.indices);
		expect(Array.from(r.mesh.indices)).toEqual(Array.from(s.indices));
	});

	it('refuses an edge limit beyond what the O(k³) programme can run', () => {
		expect(() => fillHoles(unitCube(), { maxEdges: 100_000 })).toThrow(/maxEdges must be a whole number from 3 to 1000/);
	});
});
