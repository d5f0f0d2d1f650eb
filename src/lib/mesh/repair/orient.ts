/**
 * Consistent, outward orientation. Faces are joined into patches across manifold edges (exactly two
 * faces); a breadth-first walk makes each patch's neighbours agree (an edge used once each way),
 * then the whole patch is flipped if its signed volume (divergence theorem) is negative, so closed
 * shells end with positive volume. A patch equals a shell unless the shell has non-manifold edges.
 * O(F) after the edge table.
 */
import { buildEdges } from '../edges';
import { collapsedFaces } from '../topology';
import { checkMesh, faceVolume6, type RepairResult } from './common';
import type { MeshBuffers } from '../types';

export interface OrientCounts {
	/** Faces whose winding was reversed. */
	facesFlipped: number;
	/** Patches of which more than half the faces were reversed (mostly inside-out before). */
	shellsInverted: number;
	/** Patches where the walk met a conflict (Möbius-like); left exactly as they were. */
	nonOrientableShells: number;
	/** Patches looked at (faces joined through manifold edges). */
	patches: number;
}

/**
 * For open patches the volume is taken about the patch's vertex mean, which gives the outward
 * choice for a closed surface with holes; for closed patches the origin does not matter.
 */
export function orientConsistently(mesh: MeshBuffers): RepairResult<OrientCounts> {
	checkMesh(mesh, 'orient');
	const p = mesh.positions, ix = mesh.indices;
	const vertCount = p.length / 3, triCount = ix.length / 3;
	const skip = collapsedFaces(ix).mask;
	const { edgeStart, heSorted, heEdge } = buildEdges(ix, vertCount, skip);
	const colour = new Int8Array(triCount).fill(-1);
	const queue = new Int32Array(Math.max(1, triCount));
	const flip = new Uint8Array(triCount);
	let facesFlipped = 0, shellsInverted = 0, nonOrientableShells = 0, patches = 0;
	for (let seed = 0; seed < triCount; seed++) {
		if (skip[seed] || colour[seed] >= 0) continue;
		patches++;
		let head = 0, tail = 0, conflict = false;
		queue[tail++] = seed;
		colour[seed] = 0;
		while (head < tail) {
			const f = queue[head++];
			const cf = colour[f];
			for (let k = 0; k < 3; k++) {
				const h = 3 * f + k;
				const e = heEdge[h];
				const s = edgeStart[e];
				if (edgeStart[e + 1] - s !== 2) continue;
				const o = heSorted[s] === h ? heSorted[s + 1] : heSorted[s];
				const g = (o / 3) | 0;
				// Halfedges starting at the same vertex run the same way: one of the two faces must flip.
				const want = ix[o] === ix[h] ? cf ^ 1 : cf;
				if (colour[g] < 0) {
					colour[g] = want;
					queue[tail++] = g;
				} else if (colour[g] !== want) conflict = true;
			}
		}
		if (conflict) {
			nonOrientableShells++;
			continue;
		}
		let mx = 0, my = 0, mz = 0;
		for (let i = 0; i < tail; i++) {
			const t3 = 3 * queue[i];
			for (let k = 0; k < 3; k++) {
				const v3 = 3 * ix[t3 + k];
				mx += p[v3];
				my += p[v3 + 1];
				mz += p[v3 + 2];
			}
		}
		mx /= 3 * tail;
		my /= 3 * tail;
		mz /= 3 * tail;
		let vol6 = 0;
		for (let i = 0; i < tail; i++) {
			const f = queue[i];
			const v = faceVolume6(p, ix, f, mx, my, mz);
			vol6 += colour[f] ? -v : v;
		}
		const invert = vol6 < 0 ? 1 : 0;
		let flippedHere = 0;
		for (let i = 0; i < tail; i++) {
			const f = queue[i];
			if ((colour[f] ^ invert) === 1) {
				flip[f] = 1;
				flippedHere++;
			}
		}
		facesFlipped += flippedHere;
		if (2 * flippedHere > tail) shellsInverted++;
	}
	const indices = ix.slice();
	for (let t = 0; t < triCount; t++) {
		if (!flip[t]) continue;
		const b = indices[3 * t + 1];
		indices[3 * t + 1] = indices[3 * t + 2];
		indices[3 * t + 2] = b;
	}
	return { mesh: { positions: p.slice(), indices }, counts: { facesFlipped, shellsInverted, nonOrientableShells, patches } };
}
