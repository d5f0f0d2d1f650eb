/**
 * Undirected edge table: halfedges bucketed by smaller endpoint, each bucket sorted by the larger;
 * O(H + V) for bounded valence, no per-edge objects. Halfedge h = 3t + k runs from indices[h] to
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
	/** The other halfedge of a two-face edge; OPP_BOUNDARY or OPP_NON_MANIFOLD otherwise. */
	heOpp: Int32Array;
}

export const OPP_BOUNDARY = -1;
export const OPP_NON_MANIFOLD = -2;

/** Next halfedge around the same triangle. */
export function nextHalfedge(h: number): number {
	return h % 3 === 2 ? h - 2 : h + 1;
}

// Each pass below is a function of its own that returns its result or stores it inside its loop:
// in a fresh process V8 optimises a long loop while it runs, and code after it that has not run yet
// (no type feedback) would make V8 drop that code at the loop's exit and compile the next loop again.

/** Halfedges per smaller endpoint into counts[v]; returns the halfedges of faces taking part. */
function countBuckets(indices: Uint32Array, triCount: number, skipFace: Uint8Array | undefined, counts: Uint32Array): number {
	let active = 0;
	for (let t = 0; t < triCount; t++) {
		if (skipFace !== undefined && skipFace[t]) continue;
		active += 3;
		const t3 = 3 * t;
		const a = indices[t3], b = indices[t3 + 1], c = indices[t3 + 2];
		counts[a < b ? a : b]++;
		counts[b < c ? b : c]++;
		counts[c < a ? c : a]++;
	}
	return active;
}

function prefixSums(counts: Uint32Array, vertCount: number): void {
	for (let v = 1; v < vertCount; v++) counts[v] += counts[v - 1];
}

/** Backward counting-sort scatter: leaves counts[v] at the start of bucket v. */
function scatterHalfedges(indices: Uint32Array, triCount: number, skipFace: Uint8Array | undefined, counts: Uint32Array, sorted: Uint32Array, sortedHi: Uint32Array): void {
	for (let t = triCount - 1; t >= 0; t--) {
		if (skipFace !== undefined && skipFace[t]) continue;
		const t3 = 3 * t;
		const a = indices[t3], b = indices[t3 + 1], c = indices[t3 + 2];
		let i = --counts[c < a ? c : a];
		sorted[i] = t3 + 2;
		sortedHi[i] = c < a ? a : c;
		i = --counts[b < c ? b : c];
		sorted[i] = t3 + 1;
		sortedHi[i] = b < c ? c : b;
		i = --counts[a < b ? a : b];
		sorted[i] = t3;
		sortedHi[i] = a < b ? b : a;
	}
}

/**
 * Sorts each bucket by (hi, halfedge): insertion sort up to 32 (halfedges arrive ascending, so ties
 * keep order), a native sort beyond. Returns the first bucket larger than 32 that it left for
 * sortLargeBucket, or vertCount when none is left; resumes from `from`.
 */
function sortSmallBuckets(counts: Uint32Array, from: number, vertCount: number, sorted: Uint32Array, sortedHi: Uint32Array): number {
	for (let v = from; v < vertCount; v++) {
		const s = counts[v], n = counts[v + 1] - s;
		if (n < 2) continue;
		if (n > 32) return v;
		for (let i = s + 1; i < s + n; i++) {
			const h = sorted[i], hh = sortedHi[i];
			let j = i - 1;
			while (j >= s && sortedHi[j] > hh) {
				sorted[j + 1] = sorted[j];
				sortedHi[j + 1] = sortedHi[j];
				j--;
			}
			sorted[j + 1] = h;
			sortedHi[j + 1] = hh;
		}
	}
	return vertCount;
}

/** A bucket of n > 32 halfedges from slot s, sorted natively on keys hi · n + slot (below 2^53 for any mesh under the face limit). */
function sortLargeBucket(s: number, n: number, sorted: Uint32Array, sortedHi: Uint32Array): void {
	const keys = new Float64Array(n);
	const copy = sorted.slice(s, s + n);
	for (let i = 0; i < n; i++) keys[i] = sortedHi[s + i] * n + i;
	keys.sort();
	for (let i = 0; i < n; i++) {
		const k = keys[i];
		sorted[s + i] = copy[k % n];
		sortedHi[s + i] = Math.floor(k / n);
	}
}

/** Runs of equal (lo, hi) are edges: fills edgeLo/edgeHi/edgeStart and heEdge; returns the edge count. */
function edgeRuns(
	counts: Uint32Array,
	vertCount: number,
	sorted: Uint32Array,
	sortedHi: Uint32Array,
	edgeLo: Uint32Array,
	edgeHi: Uint32Array,
	edgeStart: Uint32Array,
	heEdge: Uint32Array
): number {
	let edges = 0;
	for (let v = 0; v < vertCount; v++) {
		const s = counts[v], end = counts[v + 1];
		let prevHi = -1;
		for (let i = s; i < end; i++) {
			const h = sorted[i], hi = sortedHi[i];
			if (hi !== prevHi) {
				edgeLo[edges] = v;
				edgeHi[edges] = hi;
				edgeStart[edges] = i;
				edges++;
				prevHi = hi;
			}
			heEdge[h] = edges - 1;
		}
	}
	return edges;
}

function fillOpposites(edgeStart: Uint32Array, edgeCount: number, sorted: Uint32Array, heOpp: Int32Array): void {
	for (let k = 0; k < edgeCount; k++) {
		const s = edgeStart[k], n = edgeStart[k + 1] - s;
		if (n === 2) {
			const h0 = sorted[s], h1 = sorted[s + 1];
			heOpp[h0] = h1;
			heOpp[h1] = h0;
		} else if (n > 2) for (let i = s; i < s + n; i++) heOpp[sorted[i]] = OPP_NON_MANIFOLD;
	}
}

/**
 * Build the edge table. Faces with skipFace[t] = 1 (e.g. with a repeated vertex index) take no
 * part. Each edge's halfedges come out in ascending halfedge order.
 */
export function buildEdges(indices: Uint32Array, vertCount: number, skipFace?: Uint8Array): EdgeTable {
	const heCount = indices.length;
	const triCount = (heCount / 3) | 0;
	// Fresh pages cost more than the arithmetic here (12-16 µs per 4 KB page on small VMs), so
	// scratch is kept to what the result needs: the opposite-halfedge table reuses sortedHi's buffer.
	const heEdge = new Uint32Array(heCount);
	// Bucket halfedges by their smaller endpoint (one counting-sort scatter), then sort each bucket
	// by the larger endpoint. Buckets hold about three halfedges on average; a large bucket (a
	// vertex of very high valence) is sorted natively, so the worst case stays O(H log H).
	// counts[v] first holds the end of bucket v; the scatter runs backwards and leaves it at the
	// start, so each bucket still lists its halfedges in ascending order.
	const counts = new Uint32Array(vertCount + 1);
	const active = countBuckets(indices, triCount, skipFace, counts);
	if (active < heCount) heEdge.fill(NO_EDGE);
	prefixSums(counts, vertCount);
	counts[vertCount] = active;
	// sortedHi travels with sorted so the bucket sorts read contiguous memory. Sized for every
	// halfedge because its buffer becomes heOpp; the tail past `active` is never touched until then.
	const sorted = new Uint32Array(active);
	const sortedHi = new Uint32Array(heCount);
	scatterHalfedges(indices, triCount, skipFace, counts, sorted, sortedHi);
	for (let v = sortSmallBuckets(counts, 0, vertCount, sorted, sortedHi); v < vertCount; v = sortSmallBuckets(counts, v + 1, vertCount, sorted, sortedHi)) {
		sortLargeBucket(counts[v], counts[v + 1] - counts[v], sorted, sortedHi);
	}
	// sortedHi is not read after the runs, so its buffer becomes the opposite-halfedge table.
	const edgeLo = new Uint32Array(active);
	const edgeHi = new Uint32Array(active);
	const edgeStart = new Uint32Array(active + 1);
	const edgeCount = edgeRuns(counts, vertCount, sorted, sortedHi, edgeLo, edgeHi, edgeStart, heEdge);
	edgeStart[edgeCount] = active;
	const heOpp = new Int32Array(sortedHi.buffer, 0, heCount);
	heOpp.fill(OPP_BOUNDARY);
	fillOpposites(edgeStart, edgeCount, sorted, heOpp);
	return {
		edgeCount,
		edgeLo: edgeLo.subarray(0, edgeCount),
		edgeHi: edgeHi.subarray(0, edgeCount),
		edgeStart: edgeStart.subarray(0, edgeCount + 1),
		heSorted: sorted,
		heEdge,
		heOpp
	};
}
