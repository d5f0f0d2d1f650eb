/**
 * Drop faces of exactly zero area (exact predicates, no tolerance) and faces that repeat an earlier
 * face's three vertices in any order (the first one is kept, whatever its winding). O(F) plus a
 * sort of each bucket of faces sharing a smallest vertex.
 */
import { isDegenerateTriangle } from '../predicates';
import { checkMesh, compactMesh, type RepairResult } from './common';
import type { MeshBuffers } from '../types';

export interface DegenerateCounts {
	/** Faces with repeated or collinear corners (exactly zero area). */
	degenerateFaces: number;
	/** Faces with the same vertex set as an earlier kept face. */
	duplicateFaces: number;
	/** Vertices no kept face uses any more (dropped). */
	verticesDropped: number;
}

export function removeDegenerateAndDuplicateFaces(mesh: MeshBuffers): RepairResult<DegenerateCounts> {
	checkMesh(mesh, 'remove-degenerate-faces');
	const p = mesh.positions, ix = mesh.indices;
	const vertCount = p.length / 3, triCount = ix.length / 3;
	const keep = new Uint8Array(triCount);
	let degenerateFaces = 0;
	// Sorted corners of each live face: lo, mid, hi.
	const mid = new Uint32Array(triCount), hi = new Uint32Array(triCount);
	const counts = new Uint32Array(vertCount + 1);
	for (let t = 0; t < triCount; t++) {
		const a = ix[3 * t], b = ix[3 * t + 1], c = ix[3 * t + 2];
		if (isDegenerateTriangle(p, a, b, c)) {
			degenerateFaces++;
			continue;
		}
		keep[t] = 1;
		const lo = Math.min(a, b, c), h = Math.max(a, b, c);
		mid[t] = a + b + c - lo - h;
		hi[t] = h;
		counts[lo + 1]++;
	}
	for (let v = 0; v < vertCount; v++) counts[v + 1] += counts[v];
	const fill = counts.slice(0, vertCount);
	const order = new Uint32Array(triCount - degenerateFaces);
	for (let t = 0; t < triCount; t++) {
		if (!keep[t]) continue;
		order[fill[Math.min(ix[3 * t], ix[3 * t + 1], ix[3 * t + 2])]++] = t;
	}
	// Within a bucket, faces sorted by (mid, hi, face): equal neighbours are duplicates of the first.
	const cmp = (f: number, g: number) => mid[f] - mid[g] || hi[f] - hi[g] || f - g;
	let duplicateFaces = 0;
	for (let v = 0; v < vertCount; v++) {
		const s = counts[v], e = counts[v + 1];
		if (e - s < 2) continue;
		if (e - s <= 32) {
			for (let i = s + 1; i < e; i++) {
				const f = order[i];
				let j = i - 1;
				while (j >= s && cmp(order[j], f) > 0) {
					order[j + 1] = order[j];
					j--;
				}
				order[j + 1] = f;
			}
		} else {
			const part = Array.from(order.subarray(s, e)).sort(cmp);
			order.set(part, s);
		}
		for (let i = s + 1; i < e; i++) {
			const f = order[i], g = order[i - 1];
			if (mid[f] === mid[g] && hi[f] === hi[g]) {
				keep[f] = 0;
				duplicateFaces++;
			}
		}
	}
	const out = compactMesh(p, ix, keep);
	return { mesh: out, counts: { degenerateFaces, duplicateFaces, verticesDropped: vertCount - out.positions.length / 3 } };
}
