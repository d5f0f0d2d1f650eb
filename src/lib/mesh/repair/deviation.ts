/**
 * Deviation between two meshes: distances from sample points of one to the surface of the other
 * (exact closest point on each triangle, Ericson 2005 §5.1.5, found through the flat BVH of bvh.ts).
 * Samples are every referenced vertex plus every face centroid (deterministic, no seed), plus
 * optionally `areaSamples` points spread by area (uniform on the surface, seeded mulberry32).
 * O(S log F) for S samples on F faces (expected, for well-spread meshes).
 */
import { mulberry32 } from '../random';
import { buildFaceBvh, closestSquaredDistance } from './bvh-query';
import { checkMesh, RepairError } from './common';
import type { MeshBuffers } from '../types';

export interface OneSidedDeviation {
	/** Largest sample distance: the one-sided Hausdorff distance, up to sampling. */
	max: number;
	/** Mean sample distance. */
	mean: number;
	samples: number;
}

export interface MeshDeviation {
	/** From samples of a to the surface of b. */
	aToB: OneSidedDeviation;
	/** From samples of b to the surface of a (absent when symmetric is false). */
	bToA: OneSidedDeviation | null;
	/** max(aToB.max, bToA.max): symmetric Hausdorff distance (one-sided when symmetric is false). */
	hausdorff: number;
	/** Chamfer-style mean: the average of the two one-sided means (aToB.mean when one-sided). */
	mean: number;
	/** Distance of each vertex of a to b (0 for unreferenced vertices), for colouring a viewer. */
	perVertex: Float32Array | null;
}

export interface DeviationOptions {
	/** Also measure b → a (default true). */
	symmetric?: boolean;
	/** Return per-vertex distances of a (default false). */
	perVertex?: boolean;
	/** Extra samples per side placed uniformly by area (default 0), with this seed (default 1). */
	areaSamples?: number;
	seed?: number;
}

export const MAX_AREA_SAMPLES = 10_000_000;

function oneSided(a: MeshBuffers, b: MeshBuffers, perVertex: Float32Array | null, areaSamples: number, seed: number): OneSidedDeviation {
	const fb = buildFaceBvh(b.positions, b.indices);
	if (fb.faces.length === 0) throw new RepairError('deviation: the mesh measured against has no faces');
	const pa = a.positions, ia = a.indices;
	const vertCount = pa.length / 3, triCount = ia.length / 3;
	const used = new Uint8Array(vertCount);
	for (let i = 0; i < ia.length; i++) used[ia[i]] = 1;
	const stack = new Int32Array(1024);
	const tmp = new Float64Array(3);
	let max = 0, sum = 0, samples = 0;
	for (let v = 0; v < vertCount; v++) {
		if (!used[v]) continue;
		const d = Math.sqrt(closestSquaredDistance(fb, b.positions, b.indices, pa[3 * v], pa[3 * v + 1], pa[3 * v + 2], stack, tmp));
		if (perVertex) perVertex[v] = d;
		if (d > max) max = d;
		sum += d;
		samples++;
	}
	for (let t = 0; t < triCount; t++) {
		const a3 = 3 * ia[3 * t], b3 = 3 * ia[3 * t + 1], c3 = 3 * ia[3 * t + 2];
		const x = (pa[a3] + pa[b3] + pa[c3]) / 3, y = (pa[a3 + 1] + pa[b3 + 1] + pa[c3 + 1]) / 3, z = (pa[a3 + 2] + pa[b3 + 2] + pa[c3 + 2]) / 3;
		const d = Math.sqrt(closestSquaredDistance(fb, b.positions, b.indices, x, y, z, stack, tmp));
		if (d > max) max = d;
		sum += d;
		samples++;
	}
	if (areaSamples > 0) {
		// Cumulative face areas, then a face by binary search and a uniform point on it
		// (barycentric √r₁ trick, common practice).
		const cum = new Float64Array(triCount);
		let total = 0;
		for (let t = 0; t < triCount; t++) {
			const a3 = 3 * ia[3 * t], b3 = 3 * ia[3 * t + 1], c3 = 3 * ia[3 * t + 2];
			const ux = pa[b3] - pa[a3], uy = pa[b3 + 1] - pa[a3 + 1], uz = pa[b3 + 2] - pa[a3 + 2];
			const vx = pa[c3] - pa[a3], vy = pa[c3 + 1] - pa[a3 + 1], vz = pa[c3 + 2] - pa[a3 + 2];
			total += 0.5 * Math.hypot(uy * vz - uz * vy, uz * vx - ux * vz, ux * vy - uy * vx);
			cum[t] = total;
		}
		const rnd = mulberry32(seed);
		for (let i = 0; i < areaSamples && total > 0; i++) {
			const target = rnd() * total;
			let lo = 0, hi = triCount - 1;
			while (lo < hi) {
				const m = (lo + hi) >>> 1;
				if (cum[m] <= target) lo = m + 1;
				else hi = m;
			}
			const r1 = Math.sqrt(rnd()), r2 = rnd();
			const wa = 1 - r1, wb = r1 * (1 - r2), wc = r1 * r2;
			const a3 = 3 * ia[3 * lo], b3 = 3 * ia[3 * lo + 1], c3 = 3 * ia[3 * lo + 2];
			const x = wa * pa[a3] + wb * pa[b3] + wc * pa[c3];
			const y = wa * pa[a3 + 1] + wb * pa[b3 + 1] + wc * pa[c3 + 1];
			const z = wa * pa[a3 + 2] + wb * pa[b3 + 2] + wc * pa[c3 + 2];
			const d = Math.sqrt(closestSquaredDistance(fb, b.positions, b.indices, x, y, z, stack, tmp));
			if (d > max) max = d;
			sum += d;
			samples++;
		}
	}
	return { max, mean: samples ? sum / samples : 0, samples };
}

export function meshDeviation(a: MeshBuffers, b: MeshBuffers, opts: DeviationOptions = {}): MeshDeviation {
	checkMesh(a, 'deviation');
	checkMesh(b, 'deviation');
	if (a.indices.length === 0) throw new RepairError('deviation: the sampled mesh has no faces');
	const symmetric = opts.symmetric ?? true;
	const areaSamples = opts.areaSamples ?? 0;
	const seed = opts.seed ?? 1;
	if (!Number.isInteger(areaSamples) || areaSamples < 0 || areaSamples > MAX_AREA_SAMPLES) {
		throw new RepairError(`deviation: areaSamples must be a whole number from 0 to ${MAX_AREA_SAMPLES}, got ${String(opts.areaSamples)}`);
	}
	const perVertex = opts.perVertex ? new Float32Array(a.positions.length / 3) : null;
	const aToB = oneSided(a, b, perVertex, areaSamples, seed);
	const bToA = symmetric ? oneSided(b, a, null, areaSamples, seed + 1) : null;
	return {
		aToB,
		bToA,
		hausdorff: bToA ? Math.max(aToB.max, bToA.max) : aToB.max,
		mean: bToA ? 0.5 * (aToB.mean + bToA.mean) : aToB.mean,
		perVertex
	};
}
