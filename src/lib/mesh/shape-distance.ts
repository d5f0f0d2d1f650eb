/**
 * Shape distance between two triangle surfaces A and B, from points spread uniformly by area on each
 * (seeded, so the same pair always gives the same figures) to the nearest point of the other surface
 * (exact closest point on a triangle, found through the flat BVH of bvh.ts via repair/bvh-query.ts).
 *
 * - hausdorff: max(max over a of d(a, B), max over b of d(b, A)), the symmetric Hausdorff distance up
 *   to sampling (a sample set can only under-estimate it).
 * - chamfer: (mean over a of d(a, B) + mean over b of d(b, A)) / 2, the symmetric chamfer distance
 *   with unsquared distances, in model units.
 *
 * The sample count is fixed (not per face), so a 1 M-face iteration costs the same queries as a 10 k
 * one: O(S log F) for S samples on F faces, plus O(F) for each BVH.
 */
import { buildFaceBvh, closestSquaredDistance } from './repair/bvh-query';
import { mulberry32 } from './random';
import type { MeshBuffers } from './types';

export interface OneWayDistance {
	max: number;
	mean: number;
	samples: number;
}

export interface ShapeDistance {
	hausdorff: number;
	chamfer: number;
	aToB: OneWayDistance;
	bToA: OneWayDistance;
}

export interface ShapeDistanceOptions {
	/** Samples per surface (default 4,096). */
	samples?: number;
	/** Seed of the sample positions (default 1). */
	seed?: number;
}

export const DEFAULT_DISTANCE_SAMPLES = 4096;

/** `n` points uniform on the surface by area: a face by binary search on the cumulative areas, then the √r₁ barycentric rule (common practice). */
export function surfaceSamples(m: MeshBuffers, n: number, seed = 1): Float64Array {
	const p = m.positions, ix = m.indices;
	const tris = ix.length / 3;
	const cum = new Float64Array(tris);
	let total = 0;
	for (let t = 0; t < tris; t++) {
		const a = 3 * ix[3 * t], b = 3 * ix[3 * t + 1], c = 3 * ix[3 * t + 2];
		const ux = p[b] - p[a], uy = p[b + 1] - p[a + 1], uz = p[b + 2] - p[a + 2];
		const vx = p[c] - p[a], vy = p[c + 1] - p[a + 1], vz = p[c + 2] - p[a + 2];
		const cx = uy * vz - uz * vy, cy = uz * vx - ux * vz, cz = ux * vy - uy * vx;
		total += 0.5 * Math.sqrt(cx * cx + cy * cy + cz * cz);
		cum[t] = total;
	}
	const out = new Float64Array(3 * n);
	if (tris === 0 || !(total > 0)) return out.subarray(0, 0);
	const rnd = mulberry32(seed);
	for (let k = 0; k < n; k++) {
		const target = rnd() * total;
		let lo = 0, hi = tris - 1;
		while (lo < hi) {
			const mid = (lo + hi) >>> 1;
			if (cum[mid] < target) lo = mid + 1;
			else hi = mid;
		}
		const a = 3 * ix[3 * lo], b = 3 * ix[3 * lo + 1], c = 3 * ix[3 * lo + 2];
		const s = Math.sqrt(rnd()), r2 = rnd();
		const wa = 1 - s, wb = s * (1 - r2), wc = s * r2;
		for (let d = 0; d < 3; d++) out[3 * k + d] = wa * p[a + d] + wb * p[b + d] + wc * p[c + d];
	}
	return out;
}

function oneWay(samples: Float64Array, target: MeshBuffers): OneWayDistance {
	const fb = buildFaceBvh(target.positions, target.indices);
	const stack = new Int32Array(1024);
	const tmp = new Float64Array(3);
	const n = samples.length / 3;
	let max = 0, sum = 0;
	for (let k = 0; k < n; k++) {
		const d = Math.sqrt(closestSquaredDistance(fb, target.positions, target.indices, samples[3 * k], samples[3 * k + 1], samples[3 * k + 2], stack, tmp));
		if (d > max) max = d;
		sum += d;
	}
	return { max, mean: n ? sum / n : 0, samples: n };
}

/** Hausdorff and chamfer distance between two surfaces (model units). Throws when either has no area. */
export function shapeDistance(a: MeshBuffers, b: MeshBuffers, opts: ShapeDistanceOptions = {}): ShapeDistance {
	const n = Math.max(1, Math.floor(opts.samples ?? DEFAULT_DISTANCE_SAMPLES));
	const seed = opts.seed ?? 1;
	const sa = surfaceSamples(a, n, seed), sb = surfaceSamples(b, n, seed + 1);
	if (sa.length === 0 || sb.length === 0) throw new Error('shape distance: a surface has no area');
	const aToB = oneWay(sa, b), bToA = oneWay(sb, a);
	return { hausdorff: Math.max(aToB.max, bToA.max), chamfer: (aToB.mean + bToA.mean) / 2, aToB, bToA };
}
