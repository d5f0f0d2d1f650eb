import { describe, expect, it } from 'vitest';
import { meshDeviation } from './deviation';
import { closestOnTriangle } from './bvh-query';
import { mulberry32 } from '../testing/implicit-shapes';
import { icosphere } from '../testing/test-meshes';
import type { MeshBuffers } from '../types';

function randomSoup(seed: number, triCount: number, spread: number): MeshBuffers {
	const rnd = mulberry32(seed);
	const positions = new Float64Array(9 * triCount);
	for (let t = 0; t < triCount; t++) {
		const cx = rnd() * spread, cy = rnd() * spread, cz = rnd() * spread;
		for (let k = 0; k < 3; k++) {
			positions[9 * t + 3 * k] = cx + rnd() - 0.5;
			positions[9 * t + 3 * k + 1] = cy + rnd() - 0.5;
			positions[9 * t + 3 * k + 2] = cz + rnd() - 0.5;
		}
	}
	return { positions, indices: Uint32Array.from({ length: 3 * triCount }, (_, i) => i) };
}

/** Oracle: every sample against every triangle, closest point by minimising over a fine barycentric grid and the exact routine. */
function bruteOneSided(a: MeshBuffers, b: MeshBuffers): { max: number; mean: number } {
	const samples: number[] = [];
	const used = new Set(a.indices);
	for (const v of used) samples.push(a.positions[3 * v], a.positions[3 * v + 1], a.positions[3 * v + 2]);
	for (let t = 0; t < a.indices.length / 3; t++) {
		for (let d = 0; d < 3; d++) {
			samples.push((a.positions[3 * a.indices[3 * t] + d] + a.positions[3 * a.indices[3 * t + 1] + d] + a.positions[3 * a.indices[3 * t + 2] + d]) / 3);
		}
	}
	const tmp = new Float64Array(3);
	let max = 0, sum = 0;
	for (let s = 0; s < samples.length; s += 3) {
		let best = Infinity;
		for (let t = 0; t < b.indices.length / 3; t++) {
			const p = (k: number, d: number) => b.positions[3 * b.indices[3 * t + k] + d];
			best = Math.min(best, closestOnTriangle(samples[s], samples[s + 1], samples[s + 2], p(0, 0), p(0, 1), p(0, 2), p(1, 0), p(1, 1), p(1, 2), p(2, 0), p(2, 1), p(2, 2), tmp));
		}
		const d = Math.sqrt(best);
		max = Math.max(max, d);
		sum += d;
	}
	return { max, mean: sum / (samples.length / 3) };
}

describe('closestOnTriangle', () => {
	it('agrees with a dense barycentric search on seeded random triangles and points (seed 11)', () => {
		const rnd = mulberry32(11);
		const out = new Float64Array(3);
		for (let trial = 0; trial < 200; trial++) {
			const c = Array.from({ length: 12 }, () => 2 * rnd() - 1);
			const [qx, qy, qz, ax, ay, az, bx, by, bz, cx, cy, cz] = c;
			const d2 = closestOnTriangle(qx, qy, qz, ax, ay, az, bx, by, bz, cx, cy, cz, out);
			let best = Infinity;
			const n = 200;
			for (let i = 0; i <= n; i++)
				for (let j = 0; i + j <= n; j++) {
					const u = i / n, v = j / n, w = 1 - u - v;
					const x = w * ax + u * bx + v * cx, y = w * ay + u * by + v * cy, z = w * az + u * bz + v * cz;
					best = Math.min(best, (x - qx) ** 2 + (y - qy) ** 2 + (z - qz) ** 2);
				}
			// The grid can only be farther than the true closest point, by at most its spacing.
			expect(Math.sqrt(d2)).toBeLessThanOrEqual(Math.sqrt(best) + 1e-12);
			expect(Math.sqrt(best) - Math.sqrt(d2)).toBeLessThan(0.03);
		}
	});
});

describe('meshDeviation', () => {
	it.each([1, 2, 3])('matches brute-force closest points on random triangle soups (seed %i)', (seed) => {
		const a = randomSoup(seed, 60, 3), b = randomSoup(seed + 100, 80, 3);
		const dev = meshDeviation(a, b);
		const ab = bruteOneSided(a, b), ba = bruteOneSided(b, a);
		expect(dev.aToB.max).toBeCloseTo(ab.max, 12);
		expect(dev.aToB.mean).toBeCloseTo(ab.mean, 12);
		expect(dev.bToA!.max).toBeCloseTo(ba.max, 12);
		expect(dev.hausdorff).toBeCloseTo(Math.max(ab.max, ba.max), 12);
		expect(dev.mean).toBeCloseTo((ab.mean + ba.mean) / 2, 12);
	});

	it('gives d between concentric spheres of radii r and r + d (analytic), within the facet sagitta', () => {
		const r = 1, d = 0.05;
		const inner = icosphere(4, r), outer = icosphere(4, r + d);
		const dev = meshDeviation(inner, outer, { perVertex: true });
		// Vertices of a level-4 icosphere are at most ~0.07 rad apart: sagitta ≈ R(1 − cos 0.04) < 1e-3 R.
		const sagitta = 1e-3 * (r + d);
		expect(Math.abs(dev.hausdorff - d)).toBeLessThan(sagitta);
		expect(Math.abs(dev.mean - d)).toBeLessThan(sagitta);
		// A vertex of the inner sphere lies radially under an outer vertex (distance d), and the
		// outer facets are at most a sagitta nearer.
		expect(dev.perVertex![0]).toBeLessThanOrEqual(d + 1e-12);
		expect(dev.perVertex![0]).toBeGreaterThan(d - sagitta);
		expect(dev.perVertex!.length).toBe(inner.positions.length / 3);
	});

	it('adds seeded area-weighted samples on top of vertices and centroids (seed 5): never a smaller maximum, same result for the same seed', () => {
		const a = randomSoup(4, 40, 3), b = randomSoup(104, 50, 3);
		const base = meshDeviation(a, b);
		const more = meshDeviation(a, b, { areaSamples: 500, seed: 5 });
		expect(more.aToB.samples).toBe(base.aToB.samples + 500);
		expect(more.aToB.max).toBeGreaterThanOrEqual(base.aToB.max);
		expect(meshDeviation(a, b, { areaSamples: 500, seed: 5 }).aToB.mean).toBe(more.aToB.mean);
		expect(() => meshDeviation(a, b, { areaSamples: -1 })).toThrow(/areaSamples must be a whole number/);
	});

	it('is zero from a mesh to itself and refuses an empty target', () => {
		const s = icosphere(2);
		// Centroid samples are rounded once: zero up to float64 rounding.
		expect(meshDeviation(s, s).hausdorff).toBeLessThan(1e-12);
		expect(() => meshDeviation(s, { positions: new Float64Array(0), indices: new Uint32Array(0) })).toThrow(/no faces/);
	});
});
