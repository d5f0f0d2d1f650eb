/**
 * Silhouette (frontal) area along a direction, for any shape, convex or not: every projected
 * triangle (of closed consistent shells, those of one facing) is scan-converted onto one grid by
 * pixel-centre sampling and the covered cells are
 * counted. Error bound: a cell whose centre sample can be wrong must meet the silhouette outline,
 * and the outline lies on projected edges that are "outline candidates" — boundary or non-manifold
 * edges, and two-face edges whose opposite corners project to the same side of the edge (folds,
 * contour edges). Every cell a candidate meets is marked (once); only marked cells are sampled again
 * on REFINE × REFINE sub-cells, and |error| ≤ (sub-cell area) × (sub-cells the candidates meet).
 * An unmarked cell holds no outline, so it is wholly in or out and its centre sample is exact.
 * O(F + E + covered cells + refined samples).
 */
import { indexedPlaneBounds, planeBounds } from './bounds';
import type { EdgeTable } from './edges';
import { newSlabScratch, slabSilhouetteArea, type SlabScratch } from './projection-slabs';
import { unionSilhouetteArea } from './projection-union';
import type { Vec3 } from './report-types';

export interface SilhouetteArea {
	area: number;
	errorBound: number;
	cellsX: number;
	cellsY: number;
	cellSize: number;
}

/** Two unit vectors completing the unit direction d to an orthonormal basis. */
export function basisFor(d: Vec3): [Vec3, Vec3] {
	const [dx, dy, dz] = d;
	const ax = Math.abs(dx), ay = Math.abs(dy), az = Math.abs(dz);
	// Cross with the axis least aligned with d.
	let ux: number, uy: number, uz: number;
	if (ax <= ay && ax <= az) (ux = 0), (uy = -dz), (uz = dy);
	else if (ay <= az) (ux = dz), (uy = 0), (uz = -dx);
	else (ux = -dy), (uy = dx), (uz = 0);
	const ul = Math.hypot(ux, uy, uz);
	ux /= ul;
	uy /= ul;
	uz /= ul;
	return [
		[ux, uy, uz],
		[dy * uz - dz * uy, dz * ux - dx * uz, dx * uy - dy * ux]
	];
}

/** A frontal area with the way it was found: slabs or the exact union of the projected triangles, or the raster. */
export interface FrontalArea extends SilhouetteArea {
	method: 'union' | 'slabs' | 'raster';
}

/**
 * Meshes of at most this many faces get their frontal area from the union of the projected
 * triangles integrated over slabs (projection-slabs.ts), larger ones from the raster: measured cold,
 * the slabs take 0.6 × the raster's time at 35,000 faces, 0.7 × at 90,000, 0.9 × at 200,000 and
 * about twice as much at 1,000,000 (README, "Engine bench"; between 200,000 and 1,000,000 not measured).
 */
export const SLAB_MAX_FACES = 300_000;

/**
 * Meshes of at most this many faces whose slabs give way (a soup whose crossings pass the slabs'
 * work cap) get the exact union by polygon clipping (projection-union.ts) before the raster.
 */
export const EXACT_UNION_MAX_FACES = 256;

/**
 * Frontal area along a unit direction: slabs for meshes of at most slabMaxFaces faces, then the
 * exact union for at most exactMaxFaces faces, the raster (silhouetteArea) above that and whenever
 * those fail. Same arguments as silhouetteArea.
 */
export function frontalArea(
	positions: Float64Array,
	indices: Uint32Array,
	skipFace: Uint8Array,
	et: EdgeTable,
	direction: Vec3,
	cells: number,
	scratch?: SilhouetteScratch,
	oneSided?: Uint8Array,
	exactMaxFaces = EXACT_UNION_MAX_FACES,
	slabMaxFaces = SLAB_MAX_FACES
): FrontalArea {
	const triCount = (indices.length / 3) | 0;
	if (triCount <= slabMaxFaces || triCount <= exactMaxFaces) {
		const vertCount = (positions.length / 3) | 0;
		const [u, w] = basisFor(direction);
		const proj = scratch && scratch.proj.length >= 2 * vertCount ? scratch.proj : new Float64Array(2 * vertCount);
		if (scratch) scratch.proj = proj;
		projectVertices(positions, vertCount, u[0], u[1], u[2], w[0], w[1], w[2], proj);
		if (triCount <= slabMaxFaces) {
			const r = slabSilhouetteArea(proj, indices, triCount, skipFace, oneSided, et, scratch ? (scratch.slabs ??= newSlabScratch()) : undefined);
			if (r && Number.isFinite(r.area) && Number.isFinite(r.errorBound)) return { area: r.area, errorBound: r.errorBound, cellsX: 0, cellsY: 0, cellSize: 0, method: 'slabs' };
		}
		if (triCount <= exactMaxFaces) {
			try {
				const r = unionSilhouetteArea(proj, indices, triCount, skipFace, oneSided);
				if (Number.isFinite(r.area) && Number.isFinite(r.errorBound)) return { area: r.area, errorBound: r.errorBound, cellsX: 0, cellsY: 0, cellSize: 0, method: 'union' };
			} catch {
				// The raster below answers for every input.
			}
		}
	}
	return { ...silhouetteArea(positions, indices, skipFace, et, direction, cells, scratch, oneSided), method: 'raster' };
}

/** Scratch for silhouetteArea, reusable across directions of the same mesh. */
export interface SilhouetteScratch {
	proj: Float64Array;
	grid: Uint8Array;
	mark?: Uint8Array;
	/** The refined sub-cells and the sub-cells candidates meet (one buffer, two halves). */
	fine?: Uint8Array;
	/** The slabs' buffers. */
	slabs?: SlabScratch;
	/**
	 * Every vertex is used by a face (topology's referencedVertices equals the vertex count): the
	 * projected box is then taken over the projected vertices in order, not through the corners.
	 */
	allReferenced?: boolean;
}

export function silhouetteArea(
	positions: Float64Array,
	indices: Uint32Array,
	skipFace: Uint8Array,
	et: EdgeTable,
	direction: Vec3,
	cells: number,
	scratch?: SilhouetteScratch,
	oneSided?: Uint8Array
): SilhouetteArea {
	// Each pass is a function of its own with one loop: a fresh process (the command line) runs
	// every pass once, and a small function is compiled from its loop quickly. Nothing after a
	// pass's loop needs type feedback (its results are returned, or stored inside the loop): code
	// that has not run yet when the loop is optimised sends it back to the interpreter, to be
	// compiled again.
	const vertCount = (positions.length / 3) | 0;
	const triCount = (indices.length / 3) | 0;
	const [u, w] = basisFor(direction);
	const proj = scratch && scratch.proj.length >= 2 * vertCount ? scratch.proj : new Float64Array(2 * vertCount);
	projectVertices(positions, vertCount, u[0], u[1], u[2], w[0], w[1], w[2], proj);
	// Every vertex used by a face: the same box over the vertices in order (at most the sign of a
	// zero bound differs, which no later step can see), instead of through the corners.
	const box = scratch?.allReferenced ? planeBounds(proj, vertCount, BOX) : indexedPlaneBounds(proj, indices, BOX);
	const x0 = box[0], y0 = box[1], x1 = box[2], y1 = box[3];
	if (!(x1 > x0) || !(y1 > y0)) return { area: 0, errorBound: 0, cellsX: 0, cellsY: 0, cellSize: 0 };
	const h = Math.max(x1 - x0, y1 - y0) / cells;
	const nx = Math.max(1, Math.ceil((x1 - x0) / h));
	const ny = Math.max(1, Math.ceil((y1 - y0) / h));
	const need = nx * ny;
	const grid = scratch && scratch.grid.length >= need ? scratch.grid.subarray(0, need) : new Uint8Array(need);
	grid.fill(0);
	if (scratch) {
		scratch.proj = proj;
		if (scratch.grid.length < need) scratch.grid = grid;
	}
	const inv = 1 / h;
	const one = oneSided ?? NO_ONE_SIDED;
	const useOne = oneSided !== undefined;
	// Outline candidates first: mark every cell they meet (each cell once). An unmarked cell holds no
	// piece of the outline, so it lies wholly inside or wholly outside and its centre sample is right.
	// The marks depend on the edges alone, so they come before the triangle pass, which can then
	// sample the marked cells' sub-cells in the same pass over the triangles.
	const mark = scratch && scratch.mark && scratch.mark.length >= need ? scratch.mark.subarray(0, need) : new Uint8Array(need);
	mark.fill(0);
	if (scratch && (!scratch.mark || scratch.mark.length < need)) scratch.mark = mark;
	const cand: number[] = [];
	markCandidates(et, proj, indices, x0, y0, inv, nx, ny, mark, cand);
	const marked = countOnes(mark);
	const cellArea = h * h;
	// Refine only the marked cells: k × k sub-cells each, sampled at their centres, and bound the
	// error by the sub-cells the candidates meet. The bound shrinks about k-fold.
	let k = REFINE;
	while (k > 1 && marked * k * k > REFINE_SAMPLE_CAP) k >>= 1;
	if (marked === 0 || k === 1) {
		rasterCoarse(proj, indices, triCount, skipFace, one, useOne, x0, y0, inv, nx, ny, grid);
		const covered = countOutside(grid, mark, need);
		if (marked === 0) return { area: covered * cellArea, errorBound: 0, cellsX: nx, cellsY: ny, cellSize: h };
		return { area: (covered + countMarkedCovered(grid, mark, need)) * cellArea, errorBound: marked * cellArea, cellsX: nx, cellsY: ny, cellSize: h };
	}
	const kk = k * k;
	// Marked cells in row-major order: slot of each, and per row the sorted columns.
	const slot = new Int32Array(need).fill(-1);
	const rowStart = new Int32Array(ny + 1);
	const cols = new Int32Array(marked);
	listMarked(mark, nx, ny, slot, rowStart, cols);
	// Fresh pages cost more than filling them here, so the sub-cell buffers are kept for the next direction.
	const fineBoth = scratch && scratch.fine && scratch.fine.length >= 2 * marked * kk ? scratch.fine.subarray(0, 2 * marked * kk).fill(0) : new Uint8Array(2 * marked * kk);
	if (scratch && (!scratch.fine || scratch.fine.length < fineBoth.length)) scratch.fine = fineBoth;
	const fine = fineBoth.subarray(0, marked * kk);
	const fineEdge = fineBoth.subarray(marked * kk);
	const invF = inv * k;
	// Marked cells per rectangle in O(1) (summed-area table), so the sub-cell sampling skips every
	// triangle whose box meets no marked cell: only those can set a sub-cell, so the result is the
	// same, and it costs the triangles near the outline instead of all of them.
	const sat = new Int32Array((nx + 1) * (ny + 1));
	summedArea(mark, nx, ny, sat);
	rasterBoth(proj, indices, triCount, skipFace, one, useOne, x0, y0, inv, nx, ny, grid, invF, k, sat, rowStart, cols, fine);
	const covered = countOutside(grid, mark, need);
	const fineBound = markFineEdges(cand, et.edgeLo, et.edgeHi, proj, x0, y0, invF, k, nx, ny, slot, fineEdge, STRAY);
	const stray = STRAY[0];
	const fineCovered = countOnes(fine);
	const subArea = cellArea / kk;
	const bound = fineBound * subArea + stray * cellArea;
	return {
		area: covered * cellArea + fineCovered * subArea,
		errorBound: Math.min(bound, marked * cellArea),
		cellsX: nx,
		cellsY: ny,
		cellSize: h
	};
}

const NO_ONE_SIDED = new Uint8Array(0);
const BOX = new Float64Array(4);
/** markFineEdges' second result. */
const STRAY = new Float64Array(1);

function projectVertices(positions: Float64Array, vertCount: number, u0: number, u1: number, u2: number, w0: number, w1: number, w2: number, proj: Float64Array): void {
	for (let v = 0; v < vertCount; v++) {
		const v3 = 3 * v;
		const px = positions[v3], py = positions[v3 + 1], pz = positions[v3 + 2];
		proj[2 * v] = px * u0 + py * u1 + pz * u2;
		proj[2 * v + 1] = px * w0 + py * w1 + pz * w2;
	}
}

/** Pixel-centre raster of every projected triangle (of one facing where oneSided[t] = 1) onto grid. */
function rasterCoarse(
	proj: Float64Array,
	indices: Uint32Array,
	triCount: number,
	skipFace: Uint8Array,
	oneSided: Uint8Array,
	useOneSided: boolean,
	x0: number,
	y0: number,
	inv: number,
	nx: number,
	ny: number,
	grid: Uint8Array
): void {
	for (let t = 0; t < triCount; t++) {
		if (skipFace[t]) continue;
		const t3 = 3 * t;
		const a2 = 2 * indices[t3], b2 = 2 * indices[t3 + 1], c2 = 2 * indices[t3 + 2];
		const one = useOneSided && oneSided[t] === 1;
		coarseTriangle(proj[a2], proj[a2 + 1], proj[b2], proj[b2 + 1], proj[c2], proj[c2 + 1], one, x0, y0, inv, nx, ny, grid);
	}
}

/**
 * One projected triangle's cells whose centres it covers, set in grid; none when it is edge-on, or
 * when it faces away and `one` (of one facing) is set.
 */
function coarseTriangle(pax: number, pay: number, pbx: number, pby: number, pcx: number, pcy: number, one: boolean, x0: number, y0: number, inv: number, nx: number, ny: number, grid: Uint8Array): void {
	// Grid units, cell centres at integer + 0.5 → shift by 0.5 so centres are integers.
	const ax = (pax - x0) * inv - 0.5, ay = (pay - y0) * inv - 0.5;
	const bx = (pbx - x0) * inv - 0.5, by = (pby - y0) * inv - 0.5;
	const cx = (pcx - x0) * inv - 0.5, cy = (pcy - y0) * inv - 0.5;
	const cross = (bx - ax) * (cy - ay) - (by - ay) * (cx - ax);
	if (cross === 0) return; // edge-on: no area
	// A line along the direction that meets a closed, consistently oriented shell crosses it
	// as often forwards as backwards, so the faces of one facing cover that shell's shadow.
	if (cross < 0 && one) return;
	// + 0 turns a −0 from ceil into 0, so compiled code needs no minus-zero check here.
	let r0 = Math.ceil(Math.min(ay, by, cy)) + 0, r1 = Math.floor(Math.max(ay, by, cy));
	if (r0 < 0) r0 = 0;
	if (r1 > ny - 1) r1 = ny - 1;
	if (r1 >= r0) coarseRows(ax, ay, bx, by, cx, cy, r0, r1, nx, grid);
}

/**
 * Outline candidates (boundary and non-manifold edges, and two-face edges whose opposite corners
 * project to the same side) into cand, and every grid cell they meet set in mark.
 */
function markCandidates(et: EdgeTable, proj: Float64Array, indices: Uint32Array, x0: number, y0: number, inv: number, nx: number, ny: number, mark: Uint8Array, cand: number[]): void {
	const { edgeCount, edgeStart, heSorted, edgeLo, edgeHi } = et;
	for (let e = 0; e < edgeCount; e++) {
		const s = edgeStart[e], n = edgeStart[e + 1] - s;
		const p2 = 2 * edgeLo[e], q2 = 2 * edgeHi[e];
		if (n === 2) {
			const px = proj[p2], py = proj[p2 + 1], qx = proj[q2], qy = proj[q2 + 1];
			const h0 = heSorted[s], h1 = heSorted[s + 1];
			// Corner opposite halfedge h is the one before it: 3t + (k + 2) % 3.
			const o0 = 2 * indices[h0 % 3 === 0 ? h0 + 2 : h0 - 1];
			const o1 = 2 * indices[h1 % 3 === 0 ? h1 + 2 : h1 - 1];
			const ex = qx - px, ey = qy - py;
			const s0 = ex * (proj[o0 + 1] - py) - ey * (proj[o0] - px);
			const s1 = ex * (proj[o1 + 1] - py) - ey * (proj[o1] - px);
			if (s0 * s1 < 0) continue; // faces on both sides: interior of the silhouette locally
		}
		cand.push(e);
		markSegment((proj[p2] - x0) * inv, (proj[p2 + 1] - y0) * inv, (proj[q2] - x0) * inv, (proj[q2 + 1] - y0) * inv, nx, ny, mark);
	}
}

/** segmentCells with visit = set mark[r · nx + c]. */
function markSegment(ax: number, ay: number, bx: number, by: number, nx: number, ny: number, mark: Uint8Array): void {
	segmentRows(ay, by, ny, ROWS);
	const r0 = ROWS[0], r1 = ROWS[1];
	for (let r = r0; r <= r1; r++) {
		if (!segmentRowCells(ax, ay, bx, by, r, nx, ROWS)) continue;
		const c0 = ROWS[2], c1 = ROWS[3], row = r * nx;
		for (let c = c0; c <= c1; c++) mark[row + c] = 1;
	}
}

/**
 * Sub-cells (k per cell side) the candidate edges meet, set in fineEdge at their marked cell's
 * slot: returns how many (each once); out[0] = sub-cells met in a cell that is not marked
 * (counted as whole cells in the bound).
 */
function markFineEdges(
	cand: number[],
	edgeLo: Uint32Array,
	edgeHi: Uint32Array,
	proj: Float64Array,
	x0: number,
	y0: number,
	invF: number,
	k: number,
	nx: number,
	ny: number,
	slot: Int32Array,
	fineEdge: Uint8Array,
	out: Float64Array
): number {
	const fny = k * ny;
	let met = 0;
	out[0] = 0;
	for (let i = 0; i < cand.length; i++) {
		const e = cand[i];
		const p2 = 2 * edgeLo[e], q2 = 2 * edgeHi[e];
		const ax = (proj[p2] - x0) * invF, ay = (proj[p2 + 1] - y0) * invF, bx = (proj[q2] - x0) * invF, by = (proj[q2 + 1] - y0) * invF;
		segmentRows(ay, by, fny, ROWS);
		met += fineEdgeRows(ax, ay, bx, by, ROWS[0], ROWS[1], k, nx, slot, fineEdge, out);
	}
	return met;
}

/**
 * markFineEdges for one segment, sub-rows r0 .. r1: returns the sub-cells it sets, adds the stray
 * ones to out[0]. A function of its own for the reason given at fineRows (one long outline edge),
 * and the count is returned, as a store after the loop that has not run yet would send the
 * optimised loop back to the interpreter.
 */
function fineEdgeRows(ax: number, ay: number, bx: number, by: number, r0: number, r1: number, k: number, nx: number, slot: Int32Array, fineEdge: Uint8Array, out: Float64Array): number {
	const kk = k * k, fnx = k * nx;
	let stray = 0, met = 0;
	for (let R = r0; R <= r1; R++) {
		if (!segmentRowCells(ax, ay, bx, by, R, fnx, ROWS)) continue;
		const C0 = ROWS[2], C1 = ROWS[3];
		const cr = (R / k) | 0;
		for (let C = C0; C <= C1; C++) {
			const cc = (C / k) | 0;
			const sl = slot[cr * nx + cc];
			// A sub-cell the candidate meets lies in a cell it marked; count a stray one as a whole cell.
			if (sl < 0) stray++;
			else {
				const at = sl * kk + (R - cr * k) * k + (C - cc * k);
				if (fineEdge[at] === 0) (fineEdge[at] = 1), met++;
			}
		}
	}
	if (stray) out[0] += stray;
	return met;
}

/** Set cells of a (0 or 1 each) among the first n where b is not set. */
function countOutside(a: Uint8Array, b: Uint8Array, n: number): number {
	let onlyA = 0;
	for (let i = 0; i < n; i++) if (!b[i]) onlyA += a[i];
	return onlyA;
}

/**
 * Number of 1s in an array of 0s and 1s, run by run with indexOf (a built-in scan): the covered
 * sub-cells come in long runs, and the scan is fast from the first call on.
 */
function countOnes(a: Uint8Array): number {
	const n = a.length;
	let total = 0;
	let i = a.indexOf(1);
	while (i >= 0) {
		let j = a.indexOf(0, i);
		if (j < 0) j = n;
		total += j - i;
		if (j >= n) break;
		i = a.indexOf(1, j);
	}
	return total;
}

/** Slot of each marked cell (−1 elsewhere), and per row the sorted columns of its marked cells. */
function listMarked(mark: Uint8Array, nx: number, ny: number, slot: Int32Array, rowStart: Int32Array, cols: Int32Array): void {
	let m = 0;
	rowStart[0] = 0;
	for (let r = 0; r < ny; r++) {
		const row = r * nx;
		for (let c = 0; c < nx; c++) if (mark[row + c]) (slot[row + c] = m), (cols[m++] = c);
		rowStart[r + 1] = m;
	}
}

function summedArea(mark: Uint8Array, nx: number, ny: number, sat: Int32Array): void {
	for (let r = 0; r < ny; r++) {
		let run = 0;
		const o = (r + 1) * (nx + 1), up = r * (nx + 1), row = r * nx;
		for (let c = 0; c < nx; c++) {
			run += mark[row + c];
			sat[o + c + 1] = sat[up + c + 1] + run;
		}
	}
}

/**
 * One pass over the triangles for both rasters: the pixel-centre raster of each (of one facing
 * where oneSided[t] = 1) onto grid, as rasterCoarse, and on k × k sub-cells of the marked cells
 * only, into fine (per slot, row-major). The two share the loads of a triangle's corners; each
 * scale keeps its own coordinates and its own facing test, so each gives what a pass of its own gives.
 */
function rasterBoth(
	proj: Float64Array,
	indices: Uint32Array,
	triCount: number,
	skipFace: Uint8Array,
	oneSided: Uint8Array,
	useOneSided: boolean,
	x0: number,
	y0: number,
	inv: number,
	nx: number,
	ny: number,
	grid: Uint8Array,
	invF: number,
	k: number,
	sat: Int32Array,
	rowStart: Int32Array,
	cols: Int32Array,
	fine: Uint8Array
): void {
	const kInv = 1 / k;
	const w = nx + 1;
	for (let t = 0; t < triCount; t++) {
		if (skipFace[t]) continue;
		const t3 = 3 * t;
		const a2 = 2 * indices[t3], b2 = 2 * indices[t3 + 1], c2 = 2 * indices[t3 + 2];
		const pax = proj[a2], pay = proj[a2 + 1], pbx = proj[b2], pby = proj[b2 + 1], pcx = proj[c2], pcy = proj[c2 + 1];
		const one = useOneSided && oneSided[t] === 1;
		coarseTriangle(pax, pay, pbx, pby, pcx, pcy, one, x0, y0, inv, nx, ny, grid);
		// The sub-cells of the marked cells.
		const ax = (pax - x0) * invF - 0.5, ay = (pay - y0) * invF - 0.5;
		const bx = (pbx - x0) * invF - 0.5, by = (pby - y0) * invF - 0.5;
		const cx = (pcx - x0) * invF - 0.5, cy = (pcy - y0) * invF - 0.5;
		const cross = (bx - ax) * (cy - ay) - (by - ay) * (cx - ax);
		if (cross === 0) continue;
		if (cross < 0 && one) continue;
		// The triangle's cells, widened by one on each side against rounding.
		let q0 = Math.floor(Math.min(ax, bx, cx) * kInv) - 1, q1 = Math.floor(Math.max(ax, bx, cx) * kInv) + 2;
		let p0 = Math.floor(Math.min(ay, by, cy) * kInv) - 1, p1 = Math.floor(Math.max(ay, by, cy) * kInv) + 2;
		if (q0 < 0) q0 = 0;
		if (p0 < 0) p0 = 0;
		if (q1 > nx) q1 = nx;
		if (p1 > ny) p1 = ny;
		if (q1 <= q0 || p1 <= p0) continue;
		if (sat[p1 * w + q1] - sat[p0 * w + q1] - sat[p1 * w + q0] + sat[p0 * w + q0] === 0) continue;
		let r0 = Math.ceil(Math.min(ay, by, cy)) + 0, r1 = Math.floor(Math.max(ay, by, cy));
		if (r0 < 0) r0 = 0;
		if (r1 > k * ny - 1) r1 = k * ny - 1;
		fineRows(ax, ay, bx, by, cx, cy, r0, r1, q0, q1, k, nx, sat, rowStart, cols, fine);
	}
}

/** coarseTriangle's rows r0 .. r1 of one triangle (grid units, pixel centres at integers) set in grid. */
function coarseRows(ax: number, ay: number, bx: number, by: number, cx: number, cy: number, r0: number, r1: number, nx: number, grid: Uint8Array): void {
	for (let r = r0; r <= r1; r++) {
		rowSpan(ax, ay, bx, by, cx, cy, r, SPAN);
		let c0 = Math.ceil(SPAN[0]) + 0, c1 = Math.floor(SPAN[1]);
		if (c0 < 0) c0 = 0;
		if (c1 > nx - 1) c1 = nx - 1;
		const row = r * nx;
		if (c1 >= c0) grid.fill(1, row + c0, row + c1 + 1);
	}
}

/**
 * The sub-cell raster for one triangle (grid units of the sub-cells, pixel centres at integers), sub-rows
 * r0 .. r1, its cells q0 .. q1 − 1. A function of its own: a fresh process may first optimise
 * this loop inside one large triangle, and the code after it has then never run.
 */
function fineRows(
	ax: number,
	ay: number,
	bx: number,
	by: number,
	cx: number,
	cy: number,
	r0: number,
	r1: number,
	q0: number,
	q1: number,
	k: number,
	nx: number,
	sat: Int32Array,
	rowStart: Int32Array,
	cols: Int32Array,
	fine: Uint8Array
): void {
	const kk = k * k;
	const w = nx + 1;
	for (let R = r0; R <= r1; R++) {
		const cr = (R / k) | 0;
		const lo = rowStart[cr], hi = rowStart[cr + 1];
		// No marked cell of this cell row within the triangle's columns: skip the row's k sub-rows
		// (the last one worked out on every row, so the skip has met its arithmetic before it is optimised).
		const rowLast = (cr + 1) * k - 1;
		if (lo === hi || sat[(cr + 1) * w + q1] - sat[cr * w + q1] - sat[(cr + 1) * w + q0] + sat[cr * w + q0] === 0) {
			R = rowLast;
			continue;
		}
		rowSpan(ax, ay, bx, by, cx, cy, R, SPAN);
		const C0 = Math.max(0, Math.ceil(SPAN[0])), C1 = Math.min(k * nx - 1, Math.floor(SPAN[1]));
		if (C1 < C0) continue;
		const cc0 = (C0 / k) | 0, cc1 = (C1 / k) | 0;
		// First marked column ≥ cc0 in this row (binary search).
		let a = lo, b = hi;
		while (a < b) {
			const mid = (a + b) >> 1;
			if (cols[mid] < cc0) a = mid + 1;
			else b = mid;
		}
		const sr = (R - cr * k) * k;
		for (let i = a; i < hi && cols[i] <= cc1; i++) {
			const base = i * kk + sr, c0 = cols[i] * k;
			const f0 = Math.max(C0, c0) - c0, f1 = Math.min(C1, c0 + k - 1) - c0;
			if (f1 >= f0) fine.fill(1, base + f0, base + f1 + 1);
		}
	}
}

/** Sub-cells per side in a refined cell, and the cap on refined samples (bytes, twice over). */
export const REFINE = 32;

/** Scratch for rowSpan's two results (the raster loops are synchronous, so one is enough). */
const SPAN = new Float64Array(2);

/**
 * x-extent of triangle a, b, c on the horizontal line y = r (grid units): out[0] = left,
 * out[1] = right; left > right (Infinity, −Infinity) when the line misses the triangle.
 */
function rowSpan(ax: number, ay: number, bx: number, by: number, cx: number, cy: number, r: number, out: Float64Array): void {
	let xl = Infinity, xr = -Infinity;
	if ((ay - r) * (by - r) <= 0 && ay !== by) {
		const x = ax + ((r - ay) * (bx - ax)) / (by - ay);
		if (x < xl) xl = x;
		if (x > xr) xr = x;
	}
	if ((by - r) * (cy - r) <= 0 && by !== cy) {
		const x = bx + ((r - by) * (cx - bx)) / (cy - by);
		if (x < xl) xl = x;
		if (x > xr) xr = x;
	}
	if ((cy - r) * (ay - r) <= 0 && cy !== ay) {
		const x = cx + ((r - cy) * (ax - cx)) / (ay - cy);
		if (x < xl) xl = x;
		if (x > xr) xr = x;
	}
	out[0] = xl;
	out[1] = xr;
}
const REFINE_SAMPLE_CAP = 32 * 1024 * 1024;

function countMarkedCovered(grid: Uint8Array, mark: Uint8Array, need: number): number {
	let n = 0;
	for (let i = 0; i < need; i++) if (mark[i]) n += grid[i];
	return n;
}

/**
 * Calls visit(col, row) for every cell of an nx × ny grid (cell (c, r) covers [c, c+1) × [r, r+1)
 * in grid units) that the segment a–b meets, plus a margin of 1e-7 cells so rounding can only add
 * cells. Each cell once per segment. Row by row: the segment's x-extent within the row's band.
 */
export function segmentCells(ax: number, ay: number, bx: number, by: number, nx: number, ny: number, visit: (c: number, r: number) => void): void {
	const span = new Int32Array(4);
	segmentRows(ay, by, ny, span);
	const r0 = span[0], r1 = span[1];
	for (let r = r0; r <= r1; r++) {
		if (!segmentRowCells(ax, ay, bx, by, r, nx, span)) continue;
		const c0 = span[2], c1 = span[3];
		for (let c = c0; c <= c1; c++) visit(c, r);
	}
}

const SEGMENT_EPS = 1e-7;
/** Scratch for segmentRows ([0], [1]) and segmentRowCells ([2], [3]). */
const ROWS = new Int32Array(4);

/** The rows segmentCells visits for a segment from height ay to by: out[0] .. out[1]. */
function segmentRows(ay: number, by: number, ny: number, out: Int32Array): void {
	const ylo = Math.min(ay, by), yhi = Math.max(ay, by);
	let r0 = Math.floor(ylo - SEGMENT_EPS), r1 = Math.floor(yhi + SEGMENT_EPS);
	if (r0 < 0) r0 = 0;
	if (r1 > ny - 1) r1 = ny - 1;
	// An empty range is written as 0 .. −1, so it stays empty in 32-bit integers.
	if (!(r1 >= r0)) (r0 = 0), (r1 = -1);
	out[0] = r0;
	out[1] = r1;
}

/** The columns segmentCells visits in row r: out[2] .. out[3]; false when it visits none there. */
function segmentRowCells(ax: number, ay: number, bx: number, by: number, r: number, nx: number, out: Int32Array): boolean {
	const eps = SEGMENT_EPS;
	const dy = by - ay;
	let xl: number, xr: number;
	if (Math.abs(dy) < 1e-12) {
		xl = Math.min(ax, bx);
		xr = Math.max(ax, bx);
	} else {
		let t0 = (r - eps - ay) / dy, t1 = (r + 1 + eps - ay) / dy;
		if (t0 > t1) [t0, t1] = [t1, t0];
		if (t0 < 0) t0 = 0;
		if (t1 > 1) t1 = 1;
		if (t1 < t0) return false;
		const xa = ax + t0 * (bx - ax), xb = ax + t1 * (bx - ax);
		xl = Math.min(xa, xb);
		xr = Math.max(xa, xb);
	}
	let c0 = Math.floor(xl - eps), c1 = Math.floor(xr + eps);
	if (c0 < 0) c0 = 0;
	if (c1 > nx - 1) c1 = nx - 1;
	if (!(c1 >= c0)) return false;
	out[2] = c0;
	out[3] = c1;
	return true;
}
