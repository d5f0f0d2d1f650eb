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
import type { EdgeTable } from './edges';
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

/** Scratch for silhouetteArea, reusable across directions of the same mesh. */
export interface SilhouetteScratch {
	proj: Float64Array;
	grid: Uint8Array;
	mark?: Uint8Array;
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
	const vertCount = (positions.length / 3) | 0;
	const triCount = (indices.length / 3) | 0;
	const [u, w] = basisFor(direction);
	const proj = scratch && scratch.proj.length >= 2 * vertCount ? scratch.proj : new Float64Array(2 * vertCount);
	let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
	for (let v = 0; v < vertCount; v++) {
		const v3 = 3 * v;
		const px = positions[v3], py = positions[v3 + 1], pz = positions[v3 + 2];
		const a = px * u[0] + py * u[1] + pz * u[2];
		const b = px * w[0] + py * w[1] + pz * w[2];
		proj[2 * v] = a;
		proj[2 * v + 1] = b;
	}
	for (let i = 0; i < indices.length; i++) {
		const v2 = 2 * indices[i];
		const a = proj[v2], b = proj[v2 + 1];
		if (a < x0) x0 = a;
		if (a > x1) x1 = a;
		if (b < y0) y0 = b;
		if (b > y1) y1 = b;
	}
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
	for (let t = 0; t < triCount; t++) {
		if (skipFace[t]) continue;
		const t3 = 3 * t;
		const a2 = 2 * indices[t3], b2 = 2 * indices[t3 + 1], c2 = 2 * indices[t3 + 2];
		// Grid units, cell centres at integer + 0.5 → shift by 0.5 so centres are integers.
		const ax = (proj[a2] - x0) * inv - 0.5, ay = (proj[a2 + 1] - y0) * inv - 0.5;
		const bx = (proj[b2] - x0) * inv - 0.5, by = (proj[b2 + 1] - y0) * inv - 0.5;
		const cx = (proj[c2] - x0) * inv - 0.5, cy = (proj[c2 + 1] - y0) * inv - 0.5;
		const cross = (bx - ax) * (cy - ay) - (by - ay) * (cx - ax);
		if (cross === 0) continue; // edge-on: no area
		// A line along the direction that meets a closed, consistently oriented shell crosses it
		// as often forwards as backwards, so the faces of one facing cover that shell's shadow.
		if (cross < 0 && oneSided !== undefined && oneSided[t] === 1) continue;
		const ymin = Math.min(ay, by, cy), ymax = Math.max(ay, by, cy);
		let r0 = Math.ceil(ymin), r1 = Math.floor(ymax);
		if (r0 < 0) r0 = 0;
		if (r1 > ny - 1) r1 = ny - 1;
		for (let r = r0; r <= r1; r++) {
			rowSpan(ax, ay, bx, by, cx, cy, r, SPAN);
			let c0 = Math.ceil(SPAN[0]), c1 = Math.floor(SPAN[1]);
			if (c0 < 0) c0 = 0;
			if (c1 > nx - 1) c1 = nx - 1;
			const row = r * nx;
			if (c1 - c0 < 16) for (let c = c0; c <= c1; c++) grid[row + c] = 1;
			else grid.fill(1, row + c0, row + c1 + 1);
		}
	}
	// Outline candidates: mark every cell they meet (each cell once). An unmarked cell holds no
	// piece of the outline, so it lies wholly inside or wholly outside and its centre sample is right.
	const { edgeCount, edgeStart, heSorted, edgeLo, edgeHi } = et;
	const mark = scratch && scratch.mark && scratch.mark.length >= need ? scratch.mark.subarray(0, need) : new Uint8Array(need);
	mark.fill(0);
	if (scratch && (!scratch.mark || scratch.mark.length < need)) scratch.mark = mark;
	const cand: number[] = [];
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
		segmentCells((proj[p2] - x0) * inv, (proj[p2 + 1] - y0) * inv, (proj[q2] - x0) * inv, (proj[q2 + 1] - y0) * inv, nx, ny, (c, r) => {
			mark[r * nx + c] = 1;
		});
	}
	let covered = 0, marked = 0;
	for (let i = 0; i < need; i++) {
		if (mark[i]) marked++;
		else covered += grid[i];
	}
	const cellArea = h * h;
	if (marked === 0) return { area: covered * cellArea, errorBound: 0, cellsX: nx, cellsY: ny, cellSize: h };

	// Refine only the marked cells: k × k sub-cells each, sampled at their centres, and bound the
	// error by the sub-cells the candidates meet. The bound shrinks about k-fold.
	let k = REFINE;
	while (k > 1 && marked * k * k > REFINE_SAMPLE_CAP) k >>= 1;
	if (k === 1) return { area: (covered + countMarkedCovered(grid, mark, need)) * cellArea, errorBound: marked * cellArea, cellsX: nx, cellsY: ny, cellSize: h };
	const kk = k * k;
	// Marked cells in row-major order: slot of each, and per row the sorted columns.
	const slot = new Int32Array(need).fill(-1);
	const rowStart = new Int32Array(ny + 1);
	const cols = new Int32Array(marked);
	let m = 0;
	for (let r = 0; r < ny; r++) {
		rowStart[r] = m;
		const row = r * nx;
		for (let c = 0; c < nx; c++) if (mark[row + c]) (slot[row + c] = m), (cols[m++] = c);
	}
	rowStart[ny] = m;
	const fine = new Uint8Array(marked * kk);
	const fineEdge = new Uint8Array(marked * kk);
	const invF = inv * k;
	// Marked cells per rectangle in O(1) (summed-area table), so the fine pass skips every triangle
	// whose box meets no marked cell: only those can set a sub-cell, so the result is the same, and
	// the pass costs the triangles near the outline instead of all of them.
	const sat = new Int32Array((nx + 1) * (ny + 1));
	for (let r = 0; r < ny; r++) {
		let run = 0;
		const o = (r + 1) * (nx + 1), up = r * (nx + 1), row = r * nx;
		for (let c = 0; c < nx; c++) {
			run += mark[row + c];
			sat[o + c + 1] = sat[up + c + 1] + run;
		}
	}
	const kInv = 1 / k;
	for (let t = 0; t < triCount; t++) {
		if (skipFace[t]) continue;
		const t3 = 3 * t;
		const a2 = 2 * indices[t3], b2 = 2 * indices[t3 + 1], c2 = 2 * indices[t3 + 2];
		const ax = (proj[a2] - x0) * invF - 0.5, ay = (proj[a2 + 1] - y0) * invF - 0.5;
		const bx = (proj[b2] - x0) * invF - 0.5, by = (proj[b2 + 1] - y0) * invF - 0.5;
		const cx = (proj[c2] - x0) * invF - 0.5, cy = (proj[c2 + 1] - y0) * invF - 0.5;
		const cross = (bx - ax) * (cy - ay) - (by - ay) * (cx - ax);
		if (cross === 0) continue;
		if (cross < 0 && oneSided !== undefined && oneSided[t] === 1) continue;
		{
			// The triangle's cells, widened by one on each side against rounding.
			let q0 = Math.floor(Math.min(ax, bx, cx) * kInv) - 1, q1 = Math.floor(Math.max(ax, bx, cx) * kInv) + 2;
			let p0 = Math.floor(Math.min(ay, by, cy) * kInv) - 1, p1 = Math.floor(Math.max(ay, by, cy) * kInv) + 2;
			if (q0 < 0) q0 = 0;
			if (p0 < 0) p0 = 0;
			if (q1 > nx) q1 = nx;
			if (p1 > ny) p1 = ny;
			if (q1 <= q0 || p1 <= p0) continue;
			const w = nx + 1;
			if (sat[p1 * w + q1] - sat[p0 * w + q1] - sat[p1 * w + q0] + sat[p0 * w + q0] === 0) continue;
		}
		let r0 = Math.ceil(Math.min(ay, by, cy)), r1 = Math.floor(Math.max(ay, by, cy));
		if (r0 < 0) r0 = 0;
		if (r1 > k * ny - 1) r1 = k * ny - 1;
		for (let R = r0; R <= r1; R++) {
			const cr = (R / k) | 0;
			const lo = rowStart[cr], hi = rowStart[cr + 1];
			if (lo === hi) continue;
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
				for (let f = f0; f <= f1; f++) fine[base + f] = 1;
			}
		}
	}
	let stray = 0;
	for (const e of cand) {
		const p2 = 2 * edgeLo[e], q2 = 2 * edgeHi[e];
		segmentCells((proj[p2] - x0) * invF, (proj[p2 + 1] - y0) * invF, (proj[q2] - x0) * invF, (proj[q2 + 1] - y0) * invF, k * nx, k * ny, (C, R) => {
			const cr = (R / k) | 0, cc = (C / k) | 0;
			const sl = slot[cr * nx + cc];
			// A sub-cell the candidate meets lies in a cell it marked; count a stray one as a whole cell.
			if (sl < 0) stray++;
			else fineEdge[sl * kk + (R - cr * k) * k + (C - cc * k)] = 1;
		});
	}
	let fineCovered = 0, fineBound = 0;
	for (let i = 0; i < fine.length; i++) {
		fineCovered += fine[i];
		fineBound += fineEdge[i];
	}
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
	const eps = 1e-7;
	const ylo = Math.min(ay, by), yhi = Math.max(ay, by);
	let r0 = Math.floor(ylo - eps), r1 = Math.floor(yhi + eps);
	if (r0 < 0) r0 = 0;
	if (r1 > ny - 1) r1 = ny - 1;
	const dy = by - ay;
	for (let r = r0; r <= r1; r++) {
		let xl: number, xr: number;
		if (Math.abs(dy) < 1e-12) {
			xl = Math.min(ax, bx);
			xr = Math.max(ax, bx);
		} else {
			let t0 = (r - eps - ay) / dy, t1 = (r + 1 + eps - ay) / dy;
			if (t0 > t1) [t0, t1] = [t1, t0];
			if (t0 < 0) t0 = 0;
			if (t1 > 1) t1 = 1;
			if (t1 < t0) continue;
			const xa = ax + t0 * (bx - ax), xb = ax + t1 * (bx - ax);
			xl = Math.min(xa, xb);
			xr = Math.max(xa, xb);
		}
		let c0 = Math.floor(xl - eps), c1 = Math.floor(xr + eps);
		if (c0 < 0) c0 = 0;
		if (c1 > nx - 1) c1 = nx - 1;
		for (let c = c0; c <= c1; c++) visit(c, r);
	}
}
