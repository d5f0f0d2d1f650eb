import { describe, expect, it } from 'vitest';
import { weldByTolerance } from './weld-tolerance';
import { RepairError } from './common';
import { FORMATS, implicitMesh, inspect, openSeam, roundTrip } from '../testing/repair-support';
import { sphere, mulberry32 } from '../testing/implicit-shapes';
import { unitCube } from '../testing/test-meshes';

describe.each(FORMATS)('weldByTolerance, mesh read back from %s', (_name, write, file) => {
	it('closes a seam whose two sides are 1e-4 apart, and inspectMesh then finds no boundary', () => {
		const clean = implicitMesh(sphere(1), 0.15);
		// 1e-4 survives float32 rounding in STL; the in-memory case below uses 1e-7.
		const cracked = roundTrip(openSeam(clean, 0.1, 1e-4), write, file);
		expect(inspect(cracked).boundaryEdges).toBeGreaterThan(0);
		const r = weldByTolerance(cracked, 1e-3);
		expect(r.counts.verticesMerged).toBeGreaterThan(0);
		const rep = inspect(r.mesh);
		expect(rep.boundaryEdges).toBe(0);
		expect(rep.nonManifoldEdges).toBe(0);
		expect(rep.vertices).toBe(clean.positions.length / 3);
		expect(rep.consistentlyOriented).toBe(true);
	});
});

describe('weldByTolerance', () => {
	it('closes a seam opened by 1e-7 with tolerance 1e-6 and leaves the input unchanged', () => {
		const clean = implicitMesh(sphere(1), 0.15);
		const cracked = openSeam(clean, 0.1, 1e-7);
		const before = cracked.positions.slice();
		const r = weldByTolerance(cracked, 1e-6);
		expect(inspect(r.mesh).boundaryEdges).toBe(0);
		expect(Array.from(cracked.positions)).toEqual(Array.from(before));
		expect(r.mesh.indices.length).toBe(clean.indices.length);
	});

	it('drops faces that collapse when a short edge is welded', () => {
		const m = unitCube();
		const p = m.positions.slice();
		// One extra vertex 1e-5 from corner 7, used by a sliver face with corners 7 and 6.
		const positions = new Float64Array(p.length + 3);
		positions.set(p);
		positions.set([1 + 1e-5, 1, 1], p.length);
		const indices = new Uint32Array(m.indices.length + 3);
		indices.set(m.indices);
		indices.set([7, 8, 6], m.indices.length);
		const r = weldByTolerance({ positions, indices }, 1e-3);
		expect(r.counts).toEqual({ verticesMerged: 1, facesDropped: 1 });
		expect(r.mesh.indices.length).toBe(36);
	});

	it('agrees with brute force on seeded random points (seed 7): representatives ≥ tol apart, every vertex within tol of its own', () => {
		const rnd = mulberry32(7);
		const n = 600;
		const positions = new Float64Array(3 * n);
		for (let i = 0; i < 3 * n; i++) positions[i] = rnd() * 0.5;
		// Each vertex in one face so none is dropped as unreferenced before welding.
		const indices = new Uint32Array(3 * n);
		for (let i = 0; i < n; i++) indices.set([i, (i + 1) % n, (i + 2) % n], 3 * i);
		const tol = 0.03;
		const r = weldByTolerance({ positions, indices }, tol);
		const q = r.mesh.positions;
		const m = q.length / 3;
		let closestPair = Infinity;
		for (let i = 0; i < m; i++)
			for (let j = i + 1; j < m; j++) {
				closestPair = Math.min(closestPair, Math.hypot(q[3 * i] - q[3 * j], q[3 * i + 1] - q[3 * j + 1], q[3 * i + 2] - q[3 * j + 2]));
			}
		expect(closestPair).toBeGreaterThanOrEqual(tol);
		// Every input vertex has an output vertex closer than tol (its representative).
		let worst = 0;
		for (let v = 0; v < n; v++) {
			let best = Infinity;
			for (let i = 0; i < m; i++) best = Math.min(best, Math.hypot(q[3 * i] - positions[3 * v], q[3 * i + 1] - positions[3 * v + 1], q[3 * i + 2] - positions[3 * v + 2]));
			worst = Math.max(worst, best);
		}
		expect(worst).toBeLessThan(tol);
		expect(r.counts.verticesMerged).toBe(n - m);
	});

	it('refuses a non-positive tolerance and malformed buffers with a clear message', () => {
		expect(() => weldByTolerance(unitCube(), 0)).toThrow(RepairError);
		expect(() => weldByTolerance(unitCube(), NaN)).toThrow(/tolerance must be a positive finite number/);
		expect(() => weldByTolerance({ positions: new Float64Array(3), indices: Uint32Array.from([0, 1, 2]) }, 1)).toThrow(/refers to vertex 1/);
		expect(() => weldByTolerance({ positions: Float64Array.from([1e300, 0, 0]), indices: Uint32Array.from([0, 0, 0]) }, 1e-300)).toThrow(/too small/);
	});
});
