/**
 * Silhouette (frontal) area by horizontal slabs: the area of the union of the projected triangles
 * (the same faces as the raster in projection.ts: skipFace[t] = 1 skips a face, zero-area faces
 * take no part, and of a face with oneSided[t] = 1 only the facing side counts), integrated in y.
 *
 * Let f(y) be the length of the union's cut by the line at height y. The union's outline lies on
 * the outline candidates of projection.ts (boundary, non-manifold and fold edges), and whether a
 * point of a candidate lies on the outline changes only where it meets another candidate or a
 * corner of one. So between two heights of candidate corners, and away from crossings of two
 * candidates, f is linear in y and the midpoint rule is exact: area of the slab = height × f(mid).
 * f(mid) comes from the candidates' crossings with the middle line: the gap between two neighbouring
 * crossings holds no outline, so it is wholly inside or outside the union (coveredLength).
 *
 * A slab's candidates are ordered by x at its middle; when two neighbours in that order are out of
 * order at its bottom or top by more than the rounding of the x values, they cross inside it and the
 * slab is split at the crossing. Error bound, summed over slabs of height H:
 *  - H × 2m·ε_x for the m crossings on the middle line (ε_x bounds the rounding of each x), and the
 *    width (+ 2ε_x) of every gap too narrow (8ε_x) to judge inside or outside,
 *  - 2H × (d + ε_x) for each neighbouring pair of candidates out of order by d ≤ ε_x at an end
 *    (a crossing too close to the end to split at: the kink it puts in f moves f by at most d),
 *  - H × the candidates' x-travel across the slab, for a slab still crossed after MAX_SPLITS splits
 *    (f moves by at most that within the slab),
 *  - the area of every face whose facing the rounding may have decided wrongly (|cross| within its
 *    rounding), and a relative 2^-52 per slab for the final sum.
 * The projected corners are taken as computed, as the raster and the union take them.
 * O(F + candidates × log + Σ over slabs of the triangles meeting them × log of its candidates).
 */
import type { EdgeTable } from './edges';

export interface SlabArea {
	area: number;
	errorBound: number;
	/** Slabs integrated (after splits at crossings). */
	slabs: number;
}

const U = 2 ** -52;
/** Splits at crossings allowed per slab before it is counted with the coarse bound instead. */
const MAX_SPLITS = 4096;
/** Cap on triangles visited on the slabs' middle lines, per face and fixed (1–5 per face on the bench's tow bodies, 46 on a holed torus of 800 faces). */
const WORK_PER_FACE = 200;
const WORK_BASE = 1 << 20;

/** Buffers kept across the directions of one mesh (fresh pages cost more than reusing them). */
export interface SlabScratch {
	i32: Record<string, Int32Array>;
	f64: Record<string, Float64Array>;
}

export function newSlabScratch(): SlabScratch {
	return { i32: {}, f64: {} };
}

function i32(scratch: SlabScratch, key: string, n: number): Int32Array {
	let a = scratch.i32[key];
	if (!a || a.length < n) a = scratch.i32[key] = new Int32Array(Math.max(n, 1));
	return a.subarray(0, n);
}

function f64(scratch: SlabScratch, key: string, n: number): Float64Array {
	let a = scratch.f64[key];
	if (!a || a.length < n) a = scratch.f64[key] = new Float64Array(Math.max(n, 1));
	return a.subarray(0, n);
}

/**
 * Union area of the projected triangles by slabs; null when the slabs do not apply (faces with area
 * but no outline candidate, which a closed outline always has): the caller uses the raster.
 */
export function slabSilhouetteArea(
	proj: Float64Array,
	indices: Uint32Array,
	triCount: number,
	skipFace: Uint8Array,
	oneSided: Uint8Array | undefined,
	et: EdgeTable,
	scratch: SlabScratch = newSlabScratch()
): SlabArea | null {
	// Included triangles and their y-ranges; faces whose facing the rounding may decide wrongly.
	const tris = i32(scratch, 'tris', triCount + 1);
	const faceOut = new Float64Array(2);
	let one = oneSided;
	if (!one) {
		const none = i32(scratch, 'none', (triCount + 3) >> 2);
		none.fill(0);
		one = new Uint8Array(none.buffer, 0, triCount);
	}
	const nTri = gatherFaces(proj, indices, triCount, skipFace, one, tris, faceOut);
	const doubtful = faceOut[0];
	const scale = faceOut[1];
	// Candidates and their corner heights.
	const cand = i32(scratch, 'cand', et.edgeCount);
	const nCand = outlineCandidates(et, proj, indices, cand);
	if (nTri === 0) return { area: 0, errorBound: doubtful, slabs: 0 };
	if (nCand === 0) return null;
	const ys = f64(scratch, 'ys', 2 * nCand);
	const nY = candidateHeights(cand, nCand, et.edgeLo, et.edgeHi, proj, ys);
	const nSlab = nY - 1;
	if (nSlab < 1) return null;
	// Rounding of an x value on a line (interpolated along an edge): a few units in the last place
	// of the largest coordinate, generously.
	const epsX = 16 * U * scale;
	// Slab lists: triangles meeting each slab's open interval, candidates spanning it (CSR).
	const vertCount = proj.length >> 1;
	const vSlab = i32(scratch, 'vslab', 2 * vertCount);
	vertexSlabs(proj, vertCount, ys, nY, vSlab);
	const triStart = i32(scratch, 'triStart', nSlab + 1).fill(0);
	const triSpan = i32(scratch, 'triSpan', 2 * nTri);
	spanTriangles(indices, tris, nTri, vSlab, nY, triSpan, triStart);
	prefixSums(triStart, nSlab);
	const triList = i32(scratch, 'triList', triStart[nSlab]);
	const at = i32(scratch, 'at', nSlab);
	fillLists(tris, nTri, triSpan, triStart, at, triList);
	const candStart = i32(scratch, 'candStart', nSlab + 1).fill(0);
	const candSpan = i32(scratch, 'candSpan', 2 * nCand);
	spanCandidates(cand, nCand, et.edgeLo, et.edgeHi, vSlab, candSpan, candStart);
	prefixSums(candStart, nSlab);
	const candList = i32(scratch, 'candList', candStart[nSlab]);
	fillLists(cand, nCand, candSpan, candStart, at, candList);
	let maxCand = 0;
	for (let s = 0; s < nSlab; s++) maxCand = Math.max(maxCand, candStart[s + 1] - candStart[s]);
	const cx = f64(scratch, 'cx', 3 * maxCand);
	const order = i32(scratch, 'order', maxCand);
	const mids = f64(scratch, 'mids', maxCand);
	const hits = i32(scratch, 'hits', maxCand + 1);
	const out = new Float64Array(3);
	// Work cap: triangles visited on the slabs' middle lines (crossings add lines). Past it, give way to the raster.
	const budget = WORK_PER_FACE * triCount + WORK_BASE;
	if (!integrateSlabs(proj, indices, et.edgeLo, et.edgeHi, ys, nSlab, triStart, triList, candStart, candList, epsX, budget, cx, order, mids, hits, out)) return null;
	const area = out[0];
	const bound = out[1] + doubtful + U * (out[2] + 1) * area;
	return { area, errorBound: bound * (1 + 1e-9), slabs: out[2] };
}

/**
 * Faces that take part (not skipped, not edge-on, of the facing side where oneSided): their
 * numbers into tris, the count returned. out[0] = area of faces whose |cross| lies within its
 * rounding (their facing is in doubt), out[1] = the largest coordinate magnitude.
 */
function gatherFaces(proj: Float64Array, indices: Uint32Array, triCount: number, skipFace: Uint8Array, oneSided: Uint8Array, tris: Int32Array, out: Float64Array): number {
	// Branch-free tests: every operation runs from the first face on, so the optimised loop never
	// meets one without type feedback (which would send it back to be compiled again).
	let n = 0, doubtful = 0, scale = 0;
	out[0] = 0;
	out[1] = 0;
	for (let t = 0; t < triCount; t++) {
		const t3 = 3 * t;
		const a2 = 2 * indices[t3], b2 = 2 * indices[t3 + 1], c2 = 2 * indices[t3 + 2];
		const ax = proj[a2], ay = proj[a2 + 1], bx = proj[b2], by = proj[b2 + 1], qx = proj[c2], qy = proj[c2 + 1];
		scale = Math.max(scale, Math.abs(ax), Math.abs(ay), Math.abs(bx), Math.abs(by), Math.abs(qx), Math.abs(qy));
		const p = (bx - ax) * (qy - ay), q = (by - ay) * (qx - ax);
		const cross = p - q, size = Math.abs(cross);
		// Two products and a difference of differences: within 8 units in the last place of the terms.
		const err = 8 * U * (Math.abs(p) + Math.abs(q));
		const live = skipFace[t] === 0 ? 1 : 0;
		doubtful += (size <= err ? live : 0) * 0.5 * (size + err);
		const drop = (cross === 0 ? 1 : 0) | ((cross < 0 ? 1 : 0) & oneSided[t]);
		tris[n] = t;
		n += live & (drop ^ 1);
		// Stored on every face: a store after the loop would not have run when the loop is optimised.
		out[0] = doubtful;
		out[1] = scale;
	}
	return n;
}

/**
 * Outline candidates into cand (the count returned): boundary and non-manifold edges, and two-face
 * edges whose opposite corners project to the same side (projection.ts, markCandidates).
 */
export function outlineCandidates(et: EdgeTable, proj: Float64Array, indices: Uint32Array, cand: Int32Array): number {
	const { edgeCount, edgeStart, heSorted, edgeLo, edgeHi } = et;
	let n = 0;
	for (let e = 0; e < edgeCount; e++) {
		const s = edgeStart[e];
		if (edgeStart[e + 1] - s === 2) {
			const p2 = 2 * edgeLo[e], q2 = 2 * edgeHi[e];
			const px = proj[p2], py = proj[p2 + 1];
			const h0 = heSorted[s], h1 = heSorted[s + 1];
			const o0 = 2 * indices[h0 % 3 === 0 ? h0 + 2 : h0 - 1];
			const o1 = 2 * indices[h1 % 3 === 0 ? h1 + 2 : h1 - 1];
			const ex = proj[q2] - px, ey = proj[q2 + 1] - py;
			const s0 = ex * (proj[o0 + 1] - py) - ey * (proj[o0] - px);
			const s1 = ex * (proj[o1 + 1] - py) - ey * (proj[o1] - px);
			if (s0 * s1 < 0) continue;
		}
		cand[n++] = e;
	}
	return n;
}

/** Sorted distinct heights of the candidates' corners into ys; returns how many. */
function candidateHeights(cand: Int32Array, nCand: number, edgeLo: Uint32Array, edgeHi: Uint32Array, proj: Float64Array, ys: Float64Array): number {
	for (let i = 0; i < nCand; i++) {
		const e = cand[i];
		ys[2 * i] = proj[2 * edgeLo[e] + 1];
		ys[2 * i + 1] = proj[2 * edgeHi[e] + 1];
	}
	ys.sort();
	let m = 0;
	for (let i = 0; i < ys.length; i++) if (m === 0 || ys[i] !== ys[m - 1]) ys[m++] = ys[i];
	return m;
}

/** First index i with ys[i] > y (ys sorted, n values). */
function above(ys: Float64Array, n: number, y: number): number {
	let a = 0, b = n;
	while (a < b) {
		const m = (a + b) >> 1;
		if (ys[m] > y) b = m;
		else a = m + 1;
	}
	return a;
}

/** First index i with ys[i] >= y. */
function atOrAbove(ys: Float64Array, n: number, y: number): number {
	let a = 0, b = n;
	while (a < b) {
		const m = (a + b) >> 1;
		if (ys[m] >= y) b = m;
		else a = m + 1;
	}
	return a;
}

/**
 * Per vertex, out[2v] = the first slab boundary above its height and out[2v + 1] = the first at or
 * above it (indices into ys); monotone in the height, so a triangle's range of slabs follows from
 * its corners' without a search of its own.
 */
function vertexSlabs(proj: Float64Array, vertCount: number, ys: Float64Array, nY: number, out: Int32Array): void {
	for (let v = 0; v < vertCount; v++) {
		const y = proj[2 * v + 1];
		out[2 * v] = above(ys, nY, y);
		out[2 * v + 1] = atOrAbove(ys, nY, y);
	}
}

/**
 * Slabs s0 .. s1 − 1 each triangle's y-range meets in their open intervals, into span (2 per
 * triangle), and per slab the count into start[s + 1] (prefixSums then makes them starts). Slab s is
 * (ys[s], ys[s + 1]): it meets (y0, y1) when ys[s + 1] > y0 and ys[s] < y1.
 */
function spanTriangles(indices: Uint32Array, tris: Int32Array, nTri: number, vSlab: Int32Array, nY: number, span: Int32Array, start: Int32Array): void {
	const nSlab = nY - 1;
	for (let i = 0; i < nTri; i++) {
		const t3 = 3 * tris[i];
		const a = 2 * indices[t3], b = 2 * indices[t3 + 1], c = 2 * indices[t3 + 2];
		const s0 = Math.max(0, Math.min(vSlab[a], vSlab[b], vSlab[c]) - 1);
		const s1 = Math.max(s0, Math.min(nSlab, Math.max(vSlab[a + 1], vSlab[b + 1], vSlab[c + 1])));
		span[2 * i] = s0;
		span[2 * i + 1] = s1;
		for (let s = s0; s < s1; s++) start[s + 1]++;
	}
}

/** Running sums: counts in start[1 ..] become each slab's first place. */
function prefixSums(start: Int32Array, nSlab: number): void {
	for (let s = 0; s < nSlab; s++) start[s + 1] += start[s];
}

/** Slabs each candidate spans (its corners are slab boundaries), as spanTriangles. */
function spanCandidates(cand: Int32Array, nCand: number, edgeLo: Uint32Array, edgeHi: Uint32Array, vSlab: Int32Array, span: Int32Array, start: Int32Array): void {
	for (let i = 0; i < nCand; i++) {
		const e = cand[i];
		const a = vSlab[2 * edgeLo[e] + 1], b = vSlab[2 * edgeHi[e] + 1];
		const s0 = Math.min(a, b), s1 = Math.max(a, b);
		span[2 * i] = s0;
		span[2 * i + 1] = s1;
		for (let s = s0; s < s1; s++) start[s + 1]++;
	}
}

/** Items into each slab's run of list, by the spans and starts above (at: scratch of one per slab). */
function fillLists(items: Int32Array, n: number, span: Int32Array, start: Int32Array, at: Int32Array, list: Int32Array): void {
	at.set(start.subarray(0, at.length));
	for (let i = 0; i < n; i++) {
		const s1 = span[2 * i + 1], v = items[i];
		for (let s = span[2 * i]; s < s1; s++) list[at[s]++] = v;
	}
}

/**
 * Every slab, split at crossings of its candidates: out[0] = area, out[1] = error bound (without the
 * doubtful faces and the final sum), out[2] = slabs integrated. False when the triangles visited
 * passed budget (out is then not set).
 */
function integrateSlabs(
	proj: Float64Array,
	indices: Uint32Array,
	edgeLo: Uint32Array,
	edgeHi: Uint32Array,
	ys: Float64Array,
	nSlab: number,
	triStart: Int32Array,
	triList: Int32Array,
	candStart: Int32Array,
	candList: Int32Array,
	epsX: number,
	budget: number,
	cx: Float64Array,
	order: Int32Array,
	mids: Float64Array,
	hits: Int32Array,
	out: Float64Array
): boolean {
	let area = 0, bound = 0, slabs = 0, work = 0;
	const res = new Float64Array(3), gapOut = new Float64Array(1);
	for (let s = 0; s < nSlab; s++) {
		let ya = ys[s];
		const yTop = ys[s + 1];
		const c0 = candStart[s], c1 = candStart[s + 1], t0 = triStart[s], t1 = triStart[s + 1];
		if (c1 === c0) continue; // no candidate spans it: the union does not reach this slab
		// From the bottom up: the part up to the first crossing, then the rest again.
		let splits = 0;
		while (ya < yTop) {
			let yb = yTop;
			for (;;) {
				const ym = 0.5 * (ya + yb);
				const cut = firstCrossing(proj, edgeLo, edgeHi, candList, c0, c1, ya, ym, yb, epsX, cx, order, res);
				const crossed = cut !== -Infinity;
				if (crossed && splits < MAX_SPLITS) {
					// A crossing within rounding of an end is split off in a sliver a few units in the
					// last place high, which the coarse bound below then costs next to nothing.
					const tiny = 4 * U * (Math.abs(ya) + Math.abs(yb)) + Number.MIN_VALUE;
					const at = cut > ya + tiny ? (cut < yb - tiny ? cut : yb - tiny) : ya + tiny;
					if (at > ya && at < yb) {
						splits++;
						yb = at;
						continue;
					}
				}
				const h = yb - ya;
				work += t1 - t0;
				const len = coveredLength(proj, indices, triList, t0, t1, ym, cx, order, c1 - c0, epsX, mids, hits, gapOut);
				area += h * len;
				// Each crossing within ε_x, the narrow gaps; res[1]: 2 Σ (d + ε_x) over pairs out of order by
				// at most ε_x; res[2]: x-travel of the candidates.
				bound += h * (2 * (c1 - c0) * epsX + gapOut[0] + res[1]);
				// A crossing left inside (too many splits, or a slab too thin to split): f moves by at most the candidates' travel.
				if (crossed) bound += h * res[2];
				slabs++;
				break;
			}
			ya = yb;
		}
		if (work > budget) return false;
	}
	out[0] = area;
	out[1] = bound;
	out[2] = slabs;
	return true;
}

/**
 * Length of the union's cut at height y (triangles list[t0 .. t1)) from the m candidates crossing
 * it, sorted by x there (x_k = cx[3 order[k] + 1]): no outline lies between two neighbours, so each
 * gap between them is wholly inside the union or wholly outside, and it is inside when some
 * triangle's interval on the line, widened by 2 epsX, holds its middle (exact for gaps wider than
 * 8 epsX, as every x is within epsX). out[0] = the width of narrower gaps, each plus 2 epsX.
 */
function coveredLength(
	proj: Float64Array,
	indices: Uint32Array,
	list: Int32Array,
	t0: number,
	t1: number,
	y: number,
	cx: Float64Array,
	order: Int32Array,
	m: number,
	epsX: number,
	mids: Float64Array,
	hits: Int32Array,
	out: Float64Array
): number {
	const g = m - 1;
	out[0] = 0;
	if (g < 1) return 0;
	gapMiddles(cx, order, g, mids, hits);
	markGaps(proj, indices, list, t0, t1, y, 2 * epsX, mids, g, hits);
	return sumGaps(cx, order, g, hits, 8 * epsX, 2 * epsX, out);
}

/** Middles of the g gaps between the sorted crossings, and their hit counts cleared. */
function gapMiddles(cx: Float64Array, order: Int32Array, g: number, mids: Float64Array, hits: Int32Array): void {
	for (let k = 0; k < g; k++) {
		mids[k] = 0.5 * (cx[3 * order[k] + 1] + cx[3 * order[k + 1] + 1]);
		hits[k] = 0;
	}
	hits[g] = 0;
}

/** For each triangle's interval on the line at height y, widened by w: +1 at the first gap middle it holds, −1 after the last. */
function markGaps(proj: Float64Array, indices: Uint32Array, list: Int32Array, t0: number, t1: number, y: number, w: number, mids: Float64Array, g: number, hits: Int32Array): void {
	for (let i = t0; i < t1; i++) {
		const t3 = 3 * list[i];
		const a2 = 2 * indices[t3], b2 = 2 * indices[t3 + 1], c2 = 2 * indices[t3 + 2];
		const ax = proj[a2], ay = proj[a2 + 1], bx = proj[b2], by = proj[b2 + 1], qx = proj[c2], qy = proj[c2 + 1];
		// An edge from a corner on the line counts too (its x is then the corner's, exactly).
		let xl = Infinity, xr = -Infinity;
		if ((ay - y) * (by - y) <= 0 && ay !== by) {
			const x = ax + ((y - ay) * (bx - ax)) / (by - ay);
			xl = Math.min(xl, x);
			xr = Math.max(xr, x);
		}
		if ((by - y) * (qy - y) <= 0 && by !== qy) {
			const x = bx + ((y - by) * (qx - bx)) / (qy - by);
			xl = Math.min(xl, x);
			xr = Math.max(xr, x);
		}
		if ((qy - y) * (ay - y) <= 0 && qy !== ay) {
			const x = qx + ((y - qy) * (ax - qx)) / (ay - qy);
			xl = Math.min(xl, x);
			xr = Math.max(xr, x);
		}
		// First middle ≥ xl − w and first middle > xr + w (binary searches over g sorted middles).
		const lo = firstAtOrAbove(mids, g, xl - w), hi = firstAbove(mids, g, xr + w);
		if (hi > lo) {
			hits[lo]++;
			hits[hi]--;
		}
	}
}

function firstAtOrAbove(a: Float64Array, n: number, x: number): number {
	let lo = 0, hi = n;
	while (lo < hi) {
		const mid = (lo + hi) >> 1;
		if (a[mid] >= x) hi = mid;
		else lo = mid + 1;
	}
	return lo;
}

function firstAbove(a: Float64Array, n: number, x: number): number {
	let lo = 0, hi = n;
	while (lo < hi) {
		const mid = (lo + hi) >> 1;
		if (a[mid] > x) hi = mid;
		else lo = mid + 1;
	}
	return lo;
}

/** Width of the gaps hit; out[0] = Σ (width + pad) over gaps no wider than narrow. */
function sumGaps(cx: Float64Array, order: Int32Array, g: number, hits: Int32Array, narrow: number, pad: number, out: Float64Array): number {
	let run = 0, len = 0, doubt = 0;
	for (let k = 0; k < g; k++) {
		run += hits[k];
		const wk = cx[3 * order[k + 1] + 1] - cx[3 * order[k] + 1];
		len += run > 0 ? wk : 0;
		doubt += wk <= narrow ? wk + pad : 0;
		out[0] = doubt;
	}
	return len;
}

/**
 * Candidates of one slab ordered by x at ym; returns the height where the first neighbouring pair
 * out of order by more than epsX at ya or yb crosses (−Infinity when none). res[1] = 2 Σ (d + epsX)
 * over neighbouring pairs out of order by d ≤ epsX or in order by less than epsX at an end;
 * res[2] = Σ |x(yb) − x(ya)| over the candidates.
 */
function firstCrossing(
	proj: Float64Array,
	edgeLo: Uint32Array,
	edgeHi: Uint32Array,
	list: Int32Array,
	c0: number,
	c1: number,
	ya: number,
	ym: number,
	yb: number,
	epsX: number,
	cx: Float64Array,
	order: Int32Array,
	res: Float64Array
): number {
	const m = c1 - c0;
	let travel = 0;
	for (let i = 0; i < m; i++) {
		const e = list[c0 + i];
		const p2 = 2 * edgeLo[e], q2 = 2 * edgeHi[e];
		const px = proj[p2], py = proj[p2 + 1];
		const k = (proj[q2] - px) / (proj[q2 + 1] - py);
		const xa = px + (ya - py) * k, xb = px + (yb - py) * k;
		cx[3 * i] = xa;
		cx[3 * i + 1] = px + (ym - py) * k;
		cx[3 * i + 2] = xb;
		travel += Math.abs(xb - xa);
	}
	sortByMiddle(cx, m, order);
	let close = 0, cut = -Infinity;
	for (let k = 0; k + 1 < m; k++) {
		const i = 3 * order[k], j = 3 * order[k + 1];
		const da = cx[j] - cx[i], dm = cx[j + 1] - cx[i + 1], db = cx[j + 2] - cx[i + 2];
		if (da < -epsX && cut === -Infinity) cut = ya + ((ym - ya) * -da) / (dm - da);
		else if (db < -epsX && cut === -Infinity) cut = ym + ((yb - ym) * dm) / (dm - db);
		if (da < epsX) close += Math.max(0, -da) + epsX;
		if (db < epsX) close += Math.max(0, -db) + epsX;
	}
	res[1] = 2 * close;
	res[2] = travel;
	return cut;
}

/** order[0 .. m) = 0 .. m − 1 sorted by cx[3i + 1] (insertion sort: a slab has few candidates). */
function sortByMiddle(cx: Float64Array, m: number, order: Int32Array): void {
	for (let i = 0; i < m; i++) {
		const v = cx[3 * i + 1];
		let j = i;
		while (j > 0 && cx[3 * order[j - 1] + 1] > v) {
			order[j] = order[j - 1];
			j--;
		}
		order[j] = i;
	}
}
