/**
 * Marching cubes (Lorensen & Cline 1987) over a scalar field sampled on a regular grid, giving a
 * shared-vertex indexed mesh: one vertex per grid edge that the surface crosses (deduplicated by
 * edge), so a surface that stays inside the box comes out closed, with faces CCW seen from outside
 * (positive signed volume). Inside is field < 0.
 *
 * The 256-case table is derived when the module loads rather than typed in: on each cube face the
 * surface crossings are joined so that inside corners are always kept apart (the same decision on
 * both sides of every face, so there are none of the holes of the original table; Dürst 1988), the
 * face segments chain into closed loops, and each loop is fanned from a corner whose diagonals
 * stay off the cube faces, or from an added loop-centre vertex when no such corner exists. That
 * keeps every mesh edge on exactly two triangles.
 *
 * Memory: two slices of samples and edge-vertex ids at a time, O(nx · ny), plus the output.
 */
import type { MeshBuffers } from '../types';

export type ScalarField = (x: number, y: number, z: number) => number;

export interface GridSpec {
	/** Lower corner of the sampled box. */
	min: [number, number, number];
	/** Cell size (same along all axes). */
	cell: number;
	/** Cells along x, y, z (samples are one more along each). */
	cells: [number, number, number];
}

// Corner k of a cell sits at (k & 1, (k >> 1) & 1, (k >> 2) & 1).
const CORNER = (k: number): [number, number, number] => [k & 1, (k >> 1) & 1, (k >> 2) & 1];
// Edges: [corner a, corner b, axis], a the lower end.
const EDGES: [number, number, number][] = [];
for (let axis = 0; axis < 3; axis++) {
	for (let k = 0; k < 8; k++) if (!(k & (1 << axis))) EDGES.push([k, k | (1 << axis), axis]);
}
function edgeOf(a: number, b: number): number {
	const lo = Math.min(a, b), hi = Math.max(a, b);
	return EDGES.findIndex(([p, q]) => p === lo && q === hi);
}

interface CaseEntry {
	/** Triangles as triples: 0..11 cube edges, 12 + m the centre of loop m in `centres`. */
	tris: number[];
	centres: number[][];
}

function buildCases(): CaseEntry[] {
	// Faces as corner cycles, counter-clockwise seen from outside the cell.
	const faces: number[][] = [];
	for (let axis = 0; axis < 3; axis++) {
		for (const side of [0, 1]) {
			const corners = [0, 1, 2, 3, 4, 5, 6, 7].filter((k) => ((k >> axis) & 1) === side);
			const u = (axis + 1) % 3, v = (axis + 2) % 3;
			// Order around the face centre in the (u, v) plane; (u, v, axis) is right-handed.
			corners.sort((p, q) => Math.atan2(CORNER(p)[v] - 0.5, CORNER(p)[u] - 0.5) - Math.atan2(CORNER(q)[v] - 0.5, CORNER(q)[u] - 0.5));
			if (side === 0) corners.reverse(); // outward normal is −axis there
			faces.push(corners);
		}
	}
	const edgeFaces = EDGES.map(([a, b]) => faces.map((f, fi) => (f.includes(a) && f.includes(b) ? fi : -1)).filter((x) => x >= 0));
	const shareFace = (e1: number, e2: number) => edgeFaces[e1].some((f) => edgeFaces[e2].includes(f));

	const cases: CaseEntry[] = [];
	for (let c = 0; c < 256; c++) {
		const inside = (k: number) => ((c >> k) & 1) === 1;
		const next = new Int32Array(12).fill(-1);
		for (const f of faces) {
			// Each run of inside corners along the cycle gets its own segment, exit edge → entry edge.
			for (let k = 0; k < 4; k++) {
				const p = f[k], q = f[(k + 1) % 4];
				if (inside(p) && !inside(q)) {
					// exit at edge (p, q); walk back to the run's entry edge
					let m = k;
					while (inside(f[(m + 3) % 4])) m = (m + 3) % 4;
					const entry = edgeOf(f[(m + 3) % 4], f[m]);
					next[edgeOf(p, q)] = entry;
				}
			}
		}
		const tris: number[] = [];
		const centres: number[][] = [];
		const seen = new Uint8Array(12);
		for (let e = 0; e < 12; e++) {
			if (next[e] < 0 || seen[e]) continue;
			const loop: number[] = [];
			for (let x = e; !seen[x]; x = next[x]) {
				seen[x] = 1;
				loop.push(x);
			}
			const n = loop.length;
			let apex = -1;
			for (let s = 0; s < n && apex < 0; s++) {
				let ok = true;
				for (let k = 2; k < n - 1 && ok; k++) if (shareFace(loop[s], loop[(s + k) % n])) ok = false;
				if (ok) apex = s;
			}
			if (apex >= 0) {
				for (let k = 1; k < n - 1; k++) tris.push(loop[apex], loop[(apex + k) % n], loop[(apex + k + 1) % n]);
			} else {
				const m = 12 + centres.length;
				centres.push(loop);
				for (let k = 0; k < n; k++) tris.push(m, loop[k], loop[(k + 1) % n]);
			}
		}
		cases.push({ tris, centres });
	}
	return cases;
}

const CASES = buildCases();
/** Orientation of the derived loops relative to CCW-from-outside, fixed once by a corner case. */
const FLIP = (() => {
	// Case 1: only corner 0 inside; the outward normal points away from corner 0, towards (+,+,+).
	const [a, b, c] = CASES[1].tris;
	const pt = (e: number) => {
		const [p, q] = EDGES[e];
		const P = CORNER(p), Q = CORNER(q);
		return [(P[0] + Q[0]) / 2, (P[1] + Q[1]) / 2, (P[2] + Q[2]) / 2];
	};
	const A = pt(a), B = pt(b), C = pt(c);
	const u = [B[0] - A[0], B[1] - A[1], B[2] - A[2]], v = [C[0] - A[0], C[1] - A[1], C[2] - A[2]];
	const n = [u[1] * v[2] - u[2] * v[1], u[2] * v[0] - u[0] * v[2], u[0] * v[1] - u[1] * v[0]];
	return n[0] + n[1] + n[2] < 0;
})();

/**
 * Interpolation parameter kept 1 % of a cell off the grid corners, so no two edge vertices
 * coincide and slivers stay far above float32 spacing when written as binary STL.
 */
const T_MIN = 0.01;

class Growable {
	pos = new Float64Array(3 * 4096);
	idx = new Uint32Array(3 * 8192);
	vertCount = 0;
	idxLen = 0;
	addVertex(x: number, y: number, z: number): number {
		if (3 * this.vertCount + 3 > this.pos.length) {
			const g = new Float64Array(this.pos.length * 2);
			g.set(this.pos);
			this.pos = g;
		}
		const o = 3 * this.vertCount;
		this.pos[o] = x;
		this.pos[o + 1] = y;
		this.pos[o + 2] = z;
		return this.vertCount++;
	}
	addTri(a: number, b: number, c: number): void {
		if (this.idxLen + 3 > this.idx.length) {
			const g = new Uint32Array(this.idx.length * 2);
			g.set(this.idx);
			this.idx = g;
		}
		this.idx[this.idxLen++] = a;
		this.idx[this.idxLen++] = b;
		this.idx[this.idxLen++] = c;
	}
}

/** Largest grid accepted (samples), so a bad spec gets an error rather than an endless run. */
export const MAX_GRID_SAMPLES = 2_000_000_000;

/** Extracts the zero level set of `field` over the grid. */
export function marchingCubes(field: ScalarField, grid: GridSpec): MeshBuffers {
	const [nx, ny, nz] = grid.cells;
	const h = grid.cell;
	const [x0, y0, z0] = grid.min;
	if (![nx, ny, nz].every((n) => Number.isInteger(n) && n >= 1) || !(h > 0) || !Number.isFinite(h)) {
		throw new Error(`Marching-cubes grid needs whole cell counts ≥ 1 and a positive cell size, got ${nx}×${ny}×${nz}, cell ${h}.`);
	}
	if ((nx + 1) * (ny + 1) * (nz + 1) > MAX_GRID_SAMPLES) throw new Error(`Marching-cubes grid ${nx}×${ny}×${nz} is too large.`);
	const sx = nx + 1, sy = ny + 1;
	const plane = sx * sy;
	let valLo = new Float64Array(plane), valHi = new Float64Array(plane);
	// Vertex ids per edge, −1 where the surface does not cross: x-edges and y-edges of the lower and
	// upper slices, z-edges of the layer between them.
	let xLo = new Int32Array(nx * sy), xHi = new Int32Array(nx * sy);
	let yLo = new Int32Array(sx * ny), yHi = new Int32Array(sx * ny);
	const zMid = new Int32Array(plane);
	const out = new Growable();

	const sample = (k: number, vals: Float64Array) => {
		const z = z0 + k * h;
		for (let j = 0, o = 0; j < sy; j++) {
			const y = y0 + j * h;
			for (let i = 0; i < sx; i++, o++) {
				const v = field(x0 + i * h, y, z);
				if (Number.isNaN(v)) throw new Error(`Field is NaN at grid point (${i}, ${j}, ${k}).`);
				vals[o] = v;
			}
		}
	};
	const interp = (va: number, vb: number) => {
		const t = va / (va - vb);
		return t < T_MIN ? T_MIN : t > 1 - T_MIN ? 1 - T_MIN : t;
	};
	const sliceEdges = (k: number, vals: Float64Array, xe: Int32Array, ye: Int32Array) => {
		const z = z0 + k * h;
		for (let j = 0; j < sy; j++) {
			for (let i = 0; i < nx; i++) {
				const va = vals[j * sx + i], vb = vals[j * sx + i + 1];
				xe[j * nx + i] = va < 0 !== vb < 0 ? out.addVertex(x0 + (i + interp(va, vb)) * h, y0 + j * h, z) : -1;
			}
		}
		for (let j = 0; j < ny; j++) {
			for (let i = 0; i < sx; i++) {
				const va = vals[j * sx + i], vb = vals[(j + 1) * sx + i];
				ye[j * sx + i] = va < 0 !== vb < 0 ? out.addVertex(x0 + i * h, y0 + (j + interp(va, vb)) * h, z) : -1;
			}
		}
	};

	sample(0, valLo);
	sliceEdges(0, valLo, xLo, yLo);
	const ids = new Int32Array(12 + 4);
	for (let k = 0; k < nz; k++) {
		sample(k + 1, valHi);
		sliceEdges(k + 1, valHi, xHi, yHi);
		for (let o = 0; o < plane; o++) {
			const va = valLo[o], vb = valHi[o];
			zMid[o] = va < 0 !== vb < 0 ? out.addVertex(x0 + (o % sx) * h, y0 + Math.floor(o / sx) * h, z0 + (k + interp(va, vb)) * h) : -1;
		}
		for (let j = 0; j < ny; j++) {
			for (let i = 0; i < nx; i++) {
				const o = j * sx + i;
				const c =
					(valLo[o] < 0 ? 1 : 0) | (valLo[o + 1] < 0 ? 2 : 0) | (valLo[o + sx] < 0 ? 4 : 0) | (valLo[o + sx + 1] < 0 ? 8 : 0) |
					(valHi[o] < 0 ? 16 : 0) | (valHi[o + 1] < 0 ? 32 : 0) | (valHi[o + sx] < 0 ? 64 : 0) | (valHi[o + sx + 1] < 0 ? 128 : 0);
				if (c === 0 || c === 255) continue;
				// Edge order follows EDGES: x-edges (corners 0-1, 2-3, 4-5, 6-7), y-edges (0-2, 1-3, 4-6, 5-7),
				// z-edges (0-4, 1-5, 2-6, 3-7).
				ids[0] = xLo[j * nx + i];
				ids[1] = xLo[(j + 1) * nx + i];
				ids[2] = xHi[j * nx + i];
				ids[3] = xHi[(j + 1) * nx + i];
				ids[4] = yLo[j * sx + i];
				ids[5] = yLo[j * sx + i + 1];
				ids[6] = yHi[j * sx + i];
				ids[7] = yHi[j * sx + i + 1];
				ids[8] = zMid[o];
				ids[9] = zMid[o + 1];
				ids[10] = zMid[o + sx];
				ids[11] = zMid[o + sx + 1];
				const entry = CASES[c];
				for (let m = 0; m < entry.centres.length; m++) {
					const loop = entry.centres[m];
					let cx = 0, cy = 0, cz = 0;
					for (const e of loop) {
						const v3 = 3 * ids[e];
						cx += out.pos[v3];
						cy += out.pos[v3 + 1];
						cz += out.pos[v3 + 2];
					}
					ids[12 + m] = out.addVertex(cx / loop.length, cy / loop.length, cz / loop.length);
				}
				const tris = entry.tris;
				for (let t = 0; t < tris.length; t += 3) {
					if (FLIP) out.addTri(ids[tris[t]], ids[tris[t + 2]], ids[tris[t + 1]]);
					else out.addTri(ids[tris[t]], ids[tris[t + 1]], ids[tris[t + 2]]);
				}
			}
		}
		const tv = valLo; valLo = valHi; valHi = tv;
		const tx = xLo; xLo = xHi; xHi = tx;
		const ty = yLo; yLo = yHi; yHi = ty;
	}
	return { positions: out.pos.slice(0, 3 * out.vertCount), indices: out.idx.slice(0, out.idxLen) };
}

/** Grid covering [min, max] with the given cell size, plus one cell of margin on every side. */
export function gridFor(min: [number, number, number], max: [number, number, number], cell: number): GridSpec {
	const cells = [0, 1, 2].map((d) => Math.max(1, Math.ceil((max[d] - min[d]) / cell) + 2)) as [number, number, number];
	return { min: [min[0] - cell, min[1] - cell, min[2] - cell], cell, cells };
}
