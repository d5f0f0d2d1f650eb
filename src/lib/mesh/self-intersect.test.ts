import { describe, expect, it } from 'vitest';
import { genusRings, mulberry32, sphere, torus, towBody } from './testing/implicit-shapes';
import { gridFor, marchingCubes } from './testing/marching-cubes';
import { findSelfIntersections } from './self-intersect';
import type { MeshBuffers } from './types';
import { oracleCount } from './testing/self-intersect-oracle';

function mesh(points: number[][], tris: number[][]): MeshBuffers {
	return { positions: Float64Array.from(points.flat()), indices: Uint32Array.from(tris.flat()) };
}

function randomSoup(seed: number, triCount: number, vertCount: number, range: number): MeshBuffers {
	const rnd = mulberry32(seed);
	const pts: number[][] = [];
	for (let v = 0; v < vertCount; v++) pts.push([0, 1, 2].map(() => Math.floor(rnd() * range)));
	const tris: number[][] = [];
	for (let t = 0; t < triCount; t++) {
		const a = Math.floor(rnd() * vertCount);
		let b = Math.floor(rnd() * vertCount);
		let c = Math.floor(rnd() * vertCount);
		if (rnd() < 0.05) b = a; // some index-degenerate faces
		if (rnd() < 0.03) c = Math.floor(rnd() * 2) ? a : b;
		tris.push([a, b, c]);
	}
	return mesh(pts, tris);
}

describe('findSelfIntersections against a brute-force separating-axis oracle', () => {
	for (const seed of [1, 2, 3, 4, 5, 6, 7, 8, 9, 10]) {
		it(`matches the O(n²) oracle on a random integer soup, seed ${seed}`, () => {
			const m = randomSoup(seed, 150, seed % 2 ? 40 : 120, seed % 3 ? 5 : 9);
			const want = oracleCount(m);
			const got = findSelfIntersections(m, { sampleLimit: 1e9 });
			expect(got.degenerateSkipped).toBe(want.degenerate);
			expect(got.pairs).toBe(want.pairs);
			expect(got.sample.length).toBe(got.pairs);
		});
	}

	it('matches the oracle on seed 99 soups with non-integer coordinates scaled by 2^-20', () => {
		// Scaling by a power of two keeps every sign the same as on the integer soup.
		const m = randomSoup(99, 200, 60, 7);
		const want = oracleCount(m);
		const scaled = { positions: m.positions.map((x) => x * 2 ** -20 + 1024), indices: m.indices };
		expect(findSelfIntersections(m).pairs).toBe(want.pairs);
		// Translation by 1024 is exact too (coordinates stay below 2^53 ulps apart), so the count holds.
		expect(findSelfIntersections(scaled).pairs).toBe(want.pairs);
	});

	it('splits the pair space exactly by lower face index range (seed 7)', () => {
		const m = randomSoup(7, 300, 80, 6);
		const full = findSelfIntersections(m).pairs;
		const n = m.indices.length / 3;
		let sum = 0;
		for (const [a, b] of [[0, 37], [37, 150], [150, n]] as [number, number][]) sum += findSelfIntersections(m, { faceRange: [a, b] }).pairs;
		expect(sum).toBe(full);
	});

	it('splits the pair space exactly by traversal shards (seed 8)', () => {
		const m = randomSoup(8, 400, 100, 8);
		const full = findSelfIntersections(m).pairs;
		for (const count of [2, 3, 5]) {
			let sum = 0;
			for (let index = 0; index < count; index++) sum += findSelfIntersections(m, { shard: { index, count }, taskTarget: 16 }).pairs;
			expect(sum).toBe(full);
		}
	});
});

describe('findSelfIntersections pair rules on constructed cases', () => {
	it('counts two disjoint-vertex triangles that touch at a single point', () => {
		const m = mesh([[0, 0, 0], [2, 0, 0], [0, 2, 0], [1, 0, 0], [1, 0, 1], [1, -1, 1]], [[0, 1, 2], [3, 4, 5]]);
		const r = findSelfIntersections(m);
		expect(r.pairs).toBe(1);
		expect(r.sample[0].point).toEqual([1, 0, 0]);
	});

	it('does not count triangles a tiny positive distance apart', () => {
		const m = mesh([[0, 0, 0], [2, 0, 0], [0, 2, 0], [1, -1e-300, 0], [1, -1, 1], [1, -1, -1]], [[0, 1, 2], [3, 4, 5]]);
		expect(findSelfIntersections(m).pairs).toBe(0);
	});

	it('counts two crossing triangles with a point on both', () => {
		const m = mesh([[0, 0, 0], [4, 0, 0], [0, 4, 0], [1, 1, -1], [1, 1, 1], [3, -2, 0.5]], [[0, 1, 2], [3, 4, 5]]);
		const r = findSelfIntersections(m);
		expect(r.pairs).toBe(1);
		expect(Math.abs(r.sample[0].point[2])).toBeLessThan(1e-12);
	});

	it('counts a coplanar overlap of faces with no shared vertex', () => {
		const m = mesh([[0, 0, 0], [4, 0, 0], [0, 4, 0], [1, 1, 0], [5, 1, 0], [1, 5, 0]], [[0, 1, 2], [3, 4, 5]]);
		expect(findSelfIntersections(m).pairs).toBe(1);
	});

	it('does not count a flat fan of faces around a shared vertex', () => {
		const m = mesh([[0, 0, 0], [1, 0, 0], [0, 1, 0], [-1, 0, 0], [0, -1, 0]], [[0, 1, 2], [0, 2, 3], [0, 3, 4], [0, 4, 1]]);
		expect(findSelfIntersections(m).pairs).toBe(0);
	});

	it('counts faces sharing a vertex when the opposite edge of one pierces the other', () => {
		const m = mesh([[0, 0, 0], [4, 0, 0], [0, 4, 0], [1, 1, -1], [1, 1, 1]], [[0, 1, 2], [0, 3, 4]]);
		expect(findSelfIntersections(m).pairs).toBe(1);
	});

	it('does not count faces sharing a vertex that only meet at it', () => {
		const m = mesh([[0, 0, 0], [4, 0, 0], [0, 4, 0], [-1, -1, 1], [-1, 1, 1]], [[0, 1, 2], [0, 3, 4]]);
		expect(findSelfIntersections(m).pairs).toBe(0);
	});

	it('counts a shared-edge fold (coplanar, same side) but not a flat or bent hinge', () => {
		const pts = [[0, 0, 0], [1, 0, 0], [0, 1, 0], [0.5, 2, 0], [0.3, -1, 0], [0.5, 0.5, 1]];
		expect(findSelfIntersections(mesh(pts, [[0, 1, 2], [1, 0, 3]])).pairs).toBe(1); // fold: 3 on the same side as 2
		expect(findSelfIntersections(mesh(pts, [[0, 1, 2], [1, 0, 4]])).pairs).toBe(0); // flat neighbour
		expect(findSelfIntersections(mesh(pts, [[0, 1, 2], [1, 0, 5]])).pairs).toBe(0); // bent hinge
	});

	it('counts a duplicate face once, whatever its winding', () => {
		const pts = [[0, 0, 0], [1, 0, 0], [0, 1, 0]];
		expect(findSelfIntersections(mesh(pts, [[0, 1, 2], [2, 1, 0]])).pairs).toBe(1);
		expect(findSelfIntersections(mesh(pts, [[0, 1, 2], [1, 2, 0], [0, 2, 1]])).pairs).toBe(3);
	});

	it('skips zero-area faces and reports how many', () => {
		const pts = [[0, 0, 0], [1, 0, 0], [2, 0, 0], [0, 1, 0], [0.5, -1, 0], [0.5, 1, 0]];
		const r = findSelfIntersections(mesh(pts, [[0, 1, 2], [0, 0, 3], [0, 4, 5]]));
		expect(r.degenerateSkipped).toBe(2);
		expect(r.pairs).toBe(0);
	});

	it('reports clear errors for out-of-range indices and non-finite coordinates', () => {
		expect(() => findSelfIntersections(mesh([[0, 0, 0]], [[0, 0, 5]]))).toThrow(/refers to vertex 5/);
		expect(() => findSelfIntersections(mesh([[0, 0, NaN], [1, 0, 0], [0, 1, 0]], [[0, 1, 2]]))).toThrow(/vertex 0 has a coordinate that is not a finite number/);
	});

	it('handles an empty mesh', () => {
		expect(findSelfIntersections(mesh([], [])).pairs).toBe(0);
	});
});

describe('findSelfIntersections on marching-cubes surfaces', () => {
	for (const [shape, cell] of [[sphere(1), 0.04], [torus(1, 0.35), 0.03], [genusRings(3), 0.05], [towBody(1), 0.03]] as const) {
		it(`finds no pairs on a closed marching-cubes ${shape.name}`, () => {
			const m = marchingCubes(shape.field, gridFor(shape.min, shape.max, cell));
			const r = findSelfIntersections(m);
			expect(r.degenerateSkipped).toBe(0);
			expect(r.pairs).toBe(0);
		});
	}

	it('finds pairs on two overlapping spheres, with points on the circle where they cross', () => {
		// Unit spheres centred at x = 0 and x = 0.8 cross on the circle x = 0.4, y² + z² = 1 − 0.16.
		const cell = 0.05;
		const s = sphere(1);
		const a = marchingCubes(s.field, gridFor(s.min, s.max, cell));
		const b = marchingCubes((x, y, z) => s.field(x - 0.8, y, z), gridFor([-0.2, -1, -1], [1.8, 1, 1], cell));
		const va = a.positions.length / 3;
		const positions = new Float64Array(a.positions.length + b.positions.length);
		positions.set(a.positions);
		positions.set(b.positions, a.positions.length);
		const indices = new Uint32Array(a.indices.length + b.indices.length);
		indices.set(a.indices);
		for (let k = 0; k < b.indices.length; k++) indices[a.indices.length + k] = b.indices[k] + va;
		const r = findSelfIntersections({ positions, indices }, { sampleLimit: 500 });
		expect(r.pairs).toBeGreaterThan(100);
		expect(r.sample.length).toBe(Math.min(500, r.pairs));
		const fa = a.indices.length / 3;
		for (const { a: i, b: j, point } of r.sample) {
			expect(i).toBeLessThan(fa); // one face from each sphere
			expect(j).toBeGreaterThanOrEqual(fa);
			const [x, y, z] = point;
			// Tolerance: the facets sit within about cell²/(8r) ≈ 3e-4 of the spheres, plus interpolation error.
			expect(Math.abs(x - 0.4)).toBeLessThan(0.01);
			expect(Math.abs(Math.hypot(y, z) - Math.sqrt(0.84))).toBeLessThan(0.01);
		}
	});
});
