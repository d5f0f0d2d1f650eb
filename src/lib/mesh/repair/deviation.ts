/**
 * Deviation between two meshes: distances from sample points of one to the surface of the other
 * (exact closest point on each triangle, Ericson 2005 §5.1.5, found through the flat BVH of bvh.ts).
 * Samples are every referenced vertex plus every face centroid, so the result is deterministic and
 * needs no seed. O(S log F) for S samples on F faces (expected, for well-spread meshes).
 */
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
}

function oneSided(a: MeshBuffers, b: MeshBuffers, perVertex: Float32Array | null): OneSidedDeviation {
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
	return { max, mean: samples ? sum / samples : 0, samples };
}

export function meshDeviation(a: MeshBuffers, b: MeshBuffers, opts: DeviationOptions = {}): MeshDeviation {
	checkMesh(a, 'deviation');
	checkMesh(b, 'deviation');
	if (a.indices.length === 0) throw new RepairError('deviation: the sampled mesh has no faces');
	const symmetric = opts.symmetric ?? true;
	const perVertex = opts.perVertex ? new Float32Array(a.positions.length / 3) : null;
	const aToB = oneSided(a, b, perVertex);
	const bToA = symmetric ? oneSided(b, a, null) : null;
	return {
		aToB,
		bToA,
		hausdorff: bToA ? Math.max(aToB.max, bToA.max) : aToB.max,
		mean: bToA ? 0.5 * (aToB.mean + bToA.mean) : aToB.mean,
		perVertex
	};
}
