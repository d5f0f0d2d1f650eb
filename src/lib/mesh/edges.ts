/**
 * Undirected edge table by two stable counting-sort passes over halfedges (by hi, then by lo):
 * O(H + V) time, no per-edge objects. Halfedge h = 3t + k runs from indices[h] to
 * indices[3t + (k + 1) % 3].
 */

export const NO_EDGE = 0xffffffff;

export interface EdgeTable {
	edgeCount: number;
	/** Smaller and larger vertex index of each edge. */
	edgeLo: Uint32Array;
	edgeHi: Uint32Array;
	/** Halfedges of edge e are heSorted[edgeStart[e] .. edgeStart[e + 1]). Length edgeCount + 1. */
	edgeStart: Uint32Array;
	heSorted: Uint32Array;
	/** Edge of each halfedge; NO_EDGE for halfedges of skipped faces. Length 3 × triangles. */
	heEdge: Uint32Array;
}

/** Next halfedge around the same triangle. */
export function nextHalfedge(h: number): number {
	return h % 3 === 2 ? h - 2 : h + 1;
}

/**
 * Build the edge table. Faces with skipFace[t] = 1 (e.g. with a repeated vertex index) take no
 * part. Each edge's halfedges come out in ascending halfedge order.
 */
export function buildEdges(indices: Uint32Array, vertCount: number, skipFace?: Uint8Array): EdgeTable {
	const heCount = indices.length;
	const triCount = (heCount / 3) | 0;
	const heEdge = new Uint32Array(heCount).fill(NO_EDGE);
	let active = heCount;
	if (skipFace) {
		active = 0;
		for (let t = 0; t < triCount; t++) if (!skipFace[t]) active += 3;
	}
	const counts = new Uint32Array(vertCount + 1);
	const byHi = new Uint32Array(active);
	const sorted = new Uint32Array(active);

	// Pass 1: bucket halfedges by their larger endpoint.
	for (let t = 0; t < triCount; t++) {
		if (skipFace && skipFace[t]) continue;
		const t3 = 3 * t;
		const a = indices[t3], b = indices[t3 + 1], c = indices[t3 + 2];
		counts[(a > b ? a : b) + 1]++;
		counts[(b > c ? b : c) + 1]++;
		counts[(c > a ? c : a) + 1]++;
	}
	for (let v = 0; v < vertCount; v++) counts[v + 1] += counts[v];
	for (let t = 0; t < triCount; t++) {
		if (skipFace && skipFace[t]) continue;
		const t3 = 3 * t;
		const a = indices[t3], b = indices[t3 + 1], c = indices[t3 + 2];
		byHi[counts[a > b ? a : b]++] = t3;
		byHi[counts[b > c ? b : c]++] = t3 + 1;
		byHi[counts[c > a ? c : a]++] = t3 + 2;
	}
	// Pass 2: stable bucket by smaller endpoint.
	counts.fill(0);
	for (let i = 0; i < active; i++) {
		const h = byHi[i];
		const a = indices[h], b = indices[nextHalfedge(h)];
		counts[(a < b ? a : b) + 1]++;
	}
	for (let v = 0; v < vertCount; v++) counts[v + 1] += counts[v];
	for (let i = 0; i < active; i++) {
		const h = byHi[i];
		const a = indices[h], b = indices[nextHalfedge(h)];
		sorted[counts[a < b ? a : b]++] = h;
	}
	// Runs of equal (lo, hi) are edges. byHi is reused as the per-edge scratch.
	const edgeLo = byHi; // overwritten in place below: index e ≤ i always
	const edgeHiFull = new Uint32Array(active);
	const edgeStartFull = new Uint32Array(active + 1);
	let e = -1;
	let prevLo = -1, prevHi = -1;
	// byHi[i] is read before edgeLo[e] (e ≤ i) is written, but it is not read again: safe.
	for (let i = 0; i < active; i++) {
		const h = sorted[i];
		const a = indices[h], b = indices[nextHalfedge(h)];
		const lo = a < b ? a : b, hi = a < b ? b : a;
		if (lo !== prevLo || hi !== prevHi) {
			e++;
			edgeLo[e] = lo;
			edgeHiFull[e] = hi;
			edgeStartFull[e] = i;
			prevLo = lo;
			prevHi = hi;
		}
		heEdge[h] = e;
	}
	const edgeCount = e + 1;
	edgeStartFull[edgeCount] = active;
	return {
		edgeCount,
		edgeLo: edgeLo.subarray(0, edgeCount),
		edgeHi: edgeHiFull.subarray(0, edgeCount),
		edgeStart: edgeStartFull.subarray(0, edgeCount + 1),
		heSorted: sorted,
		heEdge
	};
}
