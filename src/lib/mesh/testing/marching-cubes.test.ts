import { describe, expect, it } from 'vitest';
import { genusRings, keelBulb, sensorPod, sphere, torus, towBody, type ImplicitShape } from './implicit-shapes';
import { gridFor, marchingCubes } from './marching-cubes';
import type { MeshBuffers } from '../types';

/** Edge use counts, Euler characteristic, vertex-link check and signed volume (divergence theorem). */
function topology(m: MeshBuffers) {
	const V = m.positions.length / 3, F = m.indices.length / 3;
	const edgeUse = new Map<number, number>();
	for (let t = 0; t < F; t++) {
		for (let k = 0; k < 3; k++) {
			const a = m.indices[3 * t + k], b = m.indices[3 * t + ((k + 1) % 3)];
			const key = Math.min(a, b) * V + Math.max(a, b);
			// directed use: +1 for a→b with a<b, +1000 for the other direction, so orientation shows too
			edgeUse.set(key, (edgeUse.get(key) ?? 0) + (a < b ? 1 : 1000));
		}
	}
	let boundary = 0, nonManifold = 0, misoriented = 0;
	for (const u of edgeUse.values()) {
		const n = (u % 1000) + Math.floor(u / 1000);
		if (n === 1) boundary++;
		else if (n > 2) nonManifold++;
		else if (u !== 1001) misoriented++;
	}
	// Vertex links: the faces around each vertex form a single cycle (no pinched vertices).
	const around: number[][] = Array.from({ length: V }, () => []);
	for (let t = 0; t < F; t++) for (let k = 0; k < 3; k++) around[m.indices[3 * t + k]].push(t);
	let pinched = 0, used = 0;
	for (let v = 0; v < V; v++) {
		const fs = around[v];
		if (fs.length === 0) continue;
		used++;
		// next vertex after v in each face → the vertex before v in the following face
		const nextOf = new Map<number, number>();
		for (const t of fs) {
			const k = [0, 1, 2].find((k) => m.indices[3 * t + k] === v)!;
			nextOf.set(m.indices[3 * t + ((k + 1) % 3)], m.indices[3 * t + ((k + 2) % 3)]);
		}
		let steps = 0;
		const first = nextOf.keys().next().value!;
		let x = first;
		do {
			x = nextOf.get(x)!;
			steps++;
		} while (x !== undefined && x !== first && steps <= fs.length);
		if (steps !== fs.length) pinched++;
	}
	let vol = 0;
	for (let t = 0; t < F; t++) {
		const [a, b, c] = [0, 1, 2].map((k) => 3 * m.indices[3 * t + k]);
		const p = m.positions;
		vol += (p[a] * (p[b + 1] * p[c + 2] - p[b + 2] * p[c + 1]) - p[a + 1] * (p[b] * p[c + 2] - p[b + 2] * p[c]) + p[a + 2] * (p[b] * p[c + 1] - p[b + 1] * p[c])) / 6;
	}
	return { V: used, E: edgeUse.size, F, chi: used - edgeUse.size + F, boundary, nonManifold, misoriented, pinched, vol };
}

function mc(shape: ImplicitShape, cell: number) {
	return marchingCubes(shape.field, gridFor(shape.min, shape.max, cell));
}

describe('marchingCubes', () => {
	it('gives a closed sphere with χ = 2 (Euler–Poincaré, genus 0) and the analytic volume 4/3·π·r³ within 1 %', () => {
		const t = topology(mc(sphere(1), 0.05));
		expect(t).toMatchObject({ boundary: 0, nonManifold: 0, misoriented: 0, pinched: 0, chi: 2 });
		expect(Math.abs(t.vol / ((4 / 3) * Math.PI) - 1)).toBeLessThan(0.01);
	});

	it('gives a closed torus with χ = 0 (Euler–Poincaré, genus 1) and volume 2π²Rr² within 2 %', () => {
		const t = topology(mc(torus(1, 0.35), 0.04));
		expect(t).toMatchObject({ boundary: 0, nonManifold: 0, misoriented: 0, pinched: 0, chi: 0 });
		expect(Math.abs(t.vol / (2 * Math.PI * Math.PI * 0.35 * 0.35) - 1)).toBeLessThan(0.02);
	});

	for (const g of [2, 3]) {
		it(`gives a closed genus-${g} ring chain with χ = 2 − 2g = ${2 - 2 * g} (Euler–Poincaré)`, () => {
			const t = topology(mc(genusRings(g), 0.04));
			expect(t).toMatchObject({ boundary: 0, nonManifold: 0, misoriented: 0, pinched: 0, chi: 2 - 2 * g });
			expect(t.vol).toBeGreaterThan(0);
		});
	}

	for (const shape of [towBody(1), keelBulb(2), sensorPod(3)]) {
		it(`gives a closed, consistently oriented genus-0 ${shape.name} (seeded bumps)`, () => {
			const t = topology(mc(shape, 0.03));
			expect(t).toMatchObject({ boundary: 0, nonManifold: 0, misoriented: 0, pinched: 0, chi: 2 });
			expect(t.vol).toBeGreaterThan(0);
		});
	}

	it('stays manifold at coarse and odd cell sizes (sphere sweep)', () => {
		for (const cell of [0.5, 0.33, 0.21, 0.137, 0.0911]) {
			const t = topology(mc(sphere(1), cell));
			expect({ cell, ...t }).toMatchObject({ cell, boundary: 0, nonManifold: 0, misoriented: 0, pinched: 0, chi: 2 });
		}
	});

	it('refuses a bad grid with a clear message', () => {
		expect(() => marchingCubes(() => 1, { min: [0, 0, 0], cell: 0, cells: [2, 2, 2] })).toThrow(/positive cell size/);
		expect(() => marchingCubes(() => NaN, { min: [0, 0, 0], cell: 1, cells: [2, 2, 2] })).toThrow(/NaN/);
	});
});
