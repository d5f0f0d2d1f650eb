/**
 * Silhouette (frontal) area along a direction, for any shape, convex or not: every projected
 * triangle (of closed consistent shells, those of one facing) is scan-converted onto one grid by pixel-centre sampling and the covered cells are
 * counted. Error bound: a cell whose centre sample can be wrong must meet the silhouette outline,
 * and the outline lies on projected edges that are "outline candidates" — boundary or non-manifold
 * edges, and two-face edges whose opposite corners project to the same side of the edge (folds,
 * contour edges). A segment with projected extents dx, dy meets at most dx/h + dy/h + 2 cells of
 * size h, so |error| ≤ h² Σ (|dx|/h + |dy|/h + 2) over candidates. O(F + E + covered cells).
 */
import type { EdgeTable } from './edges';
import type { Vec3 } from './report';

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
			// x-extent of the triangle on the row's centre line.
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
			let c0 = Math.ceil(xl), c1 = Math.floor(xr);
			if (c0 < 0) c0 = 0;
			if (c1 > nx - 1) c1 = nx - 1;
			const row = r * nx;
			if (c1 - c0 < 16) for (let c = c0; c <= c1; c++) grid[row + c] = 1;
			else grid.fill(1, row + c0, row + c1 + 1);
		}
	}
	let covered = 0;
	for (let i = 0; i < need; i++) covered += grid[i];

	// Outline candidates → error bound in cells.
	const { edgeCount, edgeStart, heSorted, edgeLo, edgeHi } = et;
	let boundCells = 0;
	for (let e = 0; e < edgeCount; e++) {
		const s = edgeStart[e], n = edgeStart[e + 1] - s;
		const p2 = 2 * edgeLo[e], q2 = 2 * edgeHi[e];
		const px = proj[p2], py = proj[p2 + 1], qx = proj[q2], qy = proj[q2 + 1];
		if (n === 2) {
			const h0 = heSorted[s], h1 = heSorted[s + 1];
			// Corner opposite halfedge h is the one before it: 3t + (k + 2) % 3.
			const o0 = 2 * indices[h0 % 3 === 0 ? h0 + 2 : h0 - 1];
			const o1 = 2 * indices[h1 % 3 === 0 ? h1 + 2 : h1 - 1];
			const ex = qx - px, ey = qy - py;
			const s0 = ex * (proj[o0 + 1] - py) - ey * (proj[o0] - px);
			const s1 = ex * (proj[o1 + 1] - py) - ey * (proj[o1] - px);
			if (s0 * s1 < 0) continue; // faces on both sides: interior of the silhouette locally
		}
		boundCells += Math.abs(qx - px) * inv + Math.abs(qy - py) * inv + 2;
	}
	const cellArea = h * h;
	return {
		area: covered * cellArea,
		errorBound: Math.min(boundCells, need) * cellArea,
		cellsX: nx,
		cellsY: ny,
		cellSize: h
	};
}
