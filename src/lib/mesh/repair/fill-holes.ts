/**
 * Fill boundary loops (holes) with the minimum-weight triangulation of the loop polygon, by dynamic
 * programming over sub-polygons (Liepa 2003, "Filling holes in meshes", §3): the weight of a
 * triangulation is the pair (largest dihedral angle between adjacent triangles, counting the mesh
 * faces on the loop, total area), compared lexicographically. O(k³) time and O(k²) memory for a
 * loop of k edges, so loops above maxEdges are left. Liepa's later refinement and fairing steps are
 * not done: the patch uses only the loop's vertices.
 *
 * Loops are walked over boundary halfedges (boundary-loops.ts), which needs the faces along the
 * loop wound consistently: run orientConsistently first; a loop whose winding breaks is left as an
 * 'open-chain'. Patches wind against the loop's halfedges, so they agree with the surrounding faces.
 * Every patch is tested for intersections with itself, with the mesh faces whose boxes overlap the
 * patch's box and with earlier patches (the exact pair rule of self-intersect.ts); a patch that
 * meets anything is dropped and its hole reported as left. A triangle whose corners repeat a vertex,
 * that has zero area, or whose inner edge already exists in the mesh (it would become non-manifold)
 * is never used.
 */
import { MAX_FILL_EDGES } from './ops';
import { buildEdges, nextHalfedge } from '../edges';
import { collapsedFaces } from '../topology';
import { indexedBounds } from '../bounds';
import { boundaryHalfedgeLoops } from './boundary-loops';
import { isDegenerateTriangle } from '../predicates';
import { findSelfIntersections } from '../self-intersect';
import { buildFaceBvh, facesInBox, facesInBoxScan, type FaceBvh } from './bvh-query';
import { bboxDiagonal, checkMesh, RepairError, type RepairResult } from './common';
import type { MeshBuffers } from '../types';

export interface FillHoleOptions {
	/** Leave loops longer than this (model units). Default: no limit. */
	maxPerimeter?: number;
	/** Leave loops with more edges than this. Default 200; at most MAX_HOLE_EDGES. */
	maxEdges?: number;
}

export type HoleLeftReason =
	| 'too-many-edges'
	| 'perimeter-too-long'
	| 'open-chain'
	| 'no-valid-triangulation'
	| 'patch-intersects-mesh';

export interface HoleLeft {
	reason: HoleLeftReason;
	edgeCount: number;
	perimeter: number;
	centroid: [number, number, number];
}

export interface FillHoleCounts {
	holesFilled: number;
	trianglesAdded: number;
	holesLeft: HoleLeft[];
}

export const DEFAULT_MAX_HOLE_EDGES = 200;
/** Up to this many holes to fill, each scans all face boxes (O(F) each) instead of building a BVH. */
const LINEAR_SCAN_HOLES = 8;
/** The programme needs ~44 bytes × k² (45 MB at 1000 edges) and k³/6 steps: larger limits are refused. */
export const MAX_HOLE_EDGES = MAX_FILL_EDGES;

export function fillHoles(mesh: MeshBuffers, opts: FillHoleOptions = {}): RepairResult<FillHoleCounts> {
	const op = 'fill-holes';
	checkMesh(mesh, op);
	const maxPerimeter = opts.maxPerimeter ?? Infinity;
	const maxEdges = opts.maxEdges ?? DEFAULT_MAX_HOLE_EDGES;
	if (typeof maxPerimeter !== 'number' || Number.isNaN(maxPerimeter) || maxPerimeter <= 0) {
		throw new RepairError(`${op}: maxPerimeter must be a positive number, got ${String(opts.maxPerimeter)}`);
	}
	if (!Number.isInteger(maxEdges) || maxEdges < 3 || maxEdges > MAX_HOLE_EDGES) {
		throw new RepairError(`${op}: maxEdges must be a whole number from 3 to ${MAX_HOLE_EDGES}, got ${String(opts.maxEdges)}`);
	}
	const p = mesh.positions, ix = mesh.indices;
	const vertCount = p.length / 3;
	const skip = collapsedFaces(ix).mask;
	const edges = buildEdges(ix, vertCount, skip);
	const loops = boundaryHalfedgeLoops(ix, vertCount, edges);
	const { edgeLo, edgeHi, edgeCount } = edges;
	const hasEdge = (a: number, b: number): boolean => {
		const lo = a < b ? a : b, hi = a < b ? b : a;
		// Edges are numbered by (lo, hi) ascending.
		let l = 0, r = edgeCount;
		while (l < r) {
			const m = (l + r) >>> 1;
			if (edgeLo[m] < lo || (edgeLo[m] === lo && edgeHi[m] < hi)) l = m + 1;
			else r = m;
		}
		return l < edgeCount && edgeLo[l] === lo && edgeHi[l] === hi;
	};

	// Edges of accepted patches, key lo · V + hi: a later patch must not reuse one as a diagonal.
	const addedEdges = new Set<number>();
	const hasEdgeOrAdded = (a: number, b: number): boolean =>
		hasEdge(a, b) || addedEdges.has(a < b ? a * vertCount + b : b * vertCount + a);
	const added: number[] = [];
	const holesLeft: HoleLeft[] = [];
	let holesFilled = 0;
	const loopPerimeter = new Float64Array(loops.loopCount);
	let candidates = 0;
	for (let l = 0; l < loops.loopCount; l++) {
		const s = loops.loopStart[l], n = loops.loopStart[l + 1] - s;
		let perimeter = 0;
		for (let i = 0; i < n; i++) {
			const h = loops.loopHe[s + i];
			const a3 = 3 * ix[h], b3 = 3 * ix[nextHalfedge(h)];
			perimeter += Math.hypot(p[b3] - p[a3], p[b3 + 1] - p[a3 + 1], p[b3 + 2] - p[a3 + 2]);
		}
		loopPerimeter[l] = perimeter;
		if (!loops.open[l] && n <= maxEdges && perimeter <= maxPerimeter) candidates++;
	}
	// Neighbourhood search: a scan of all face boxes per hole for a few holes, else one BVH.
	let faceBvh: FaceBvh | null = null;
	const diag = bboxDiagonal(mesh);
	for (let l = 0; l < loops.loopCount; l++) {
		const s = loops.loopStart[l], n = loops.loopStart[l + 1] - s;
		const perimeter = loopPerimeter[l];
		let gx = 0, gy = 0, gz = 0;
		for (let i = 0; i < n; i++) {
			const v3 = 3 * ix[loops.loopHe[s + i]];
			gx += p[v3];
			gy += p[v3 + 1];
			gz += p[v3 + 2];
		}
		const left = (reason: HoleLeftReason) => holesLeft.push({ reason, edgeCount: n, perimeter, centroid: [gx / n, gy / n, gz / n] });
		if (loops.open[l]) { left('open-chain'); continue; }
		if (n > maxEdges) { left('too-many-edges'); continue; }
		if (perimeter > maxPerimeter) { left('perimeter-too-long'); continue; }
		// Polygon q in the patch's winding, against the loop's halfedges h_i = v_i → v_(i+1):
		// q_i = v_(n−i), so polygon edge (q_i, q_(i+1)) reverses h_(n−i−1) and borders its face.
		const q = new Uint32Array(n);
		const qFace = new Uint32Array(n);
		for (let i = 0; i < n; i++) {
			q[i] = ix[loops.loopHe[s + ((n - i) % n)]];
			qFace[i] = (loops.loopHe[s + n - i - 1] / 3) | 0;
		}
		// A loop through a pinch vertex is split there into simple loops, filled one by one.
		let tris: number[] | null = [];
		for (const [sq, sf] of splitAtRepeats(q, qFace)) {
			const part = sq.length >= 3 ? triangulateLoop(p, ix, sq, sf, hasEdgeOrAdded) : null;
			if (!part) {
				tris = null;
				break;
			}
			for (let i = 0; i < part.length; i++) tris.push(part[i]);
		}
		if (!tris) { left('no-valid-triangulation'); continue; }
		// Intersection test against the neighbourhood of the patch.
		const [mnx, mny, mnz, mxx, mxy, mxz] = indexedBounds(p, q, 0, n);
		const pad = 1e-9 * diag;
		const near: number[] = [];
		if (candidates <= LINEAR_SCAN_HOLES) facesInBoxScan(p, ix, skip, mnx - pad, mny - pad, mnz - pad, mxx + pad, mxy + pad, mxz + pad, near);
		else {
			faceBvh ??= buildFaceBvh(p, ix, skip);
			facesInBox(faceBvh, mnx - pad, mny - pad, mnz - pad, mxx + pad, mxy + pad, mxz + pad, near);
		}
		if (patchIntersects(p, ix, tris, near, added, mnx - pad, mny - pad, mnz - pad, mxx + pad, mxy + pad, mxz + pad)) {
			left('patch-intersects-mesh');
			continue;
		}
		for (let i = 0; i < tris.length; i++) added.push(tris[i]);
		for (let i = 0; i < tris.length; i += 3) {
			for (let k = 0; k < 3; k++) {
				const a = tris[i + k], b = tris[i + ((k + 1) % 3)];
				addedEdges.add(a < b ? a * vertCount + b : b * vertCount + a);
			}
		}
		holesFilled++;
	}
	const indices = new Uint32Array(ix.length + added.length);
	indices.set(ix);
	for (let i = 0; i < added.length; i++) indices[ix.length + i] = added[i];
	return { mesh: { positions: p.slice(), indices }, counts: { holesFilled, trianglesAdded: added.length / 3, holesLeft } };
}

/** Splits a closed polygon at repeated vertices into simple polygons (with their edge faces). */
function splitAtRepeats(q: Uint32Array, qFace: Uint32Array): [Uint32Array, Uint32Array][] {
	const out: [Uint32Array, Uint32Array][] = [];
	const work: [Uint32Array, Uint32Array][] = [[q, qFace]];
	while (work.length) {
		const [cq, cf] = work.pop()!;
		const n = cq.length;
		const seen = new Map<number, number>();
		let a = -1, b = -1;
		for (let i = 0; i < n && a < 0; i++) {
			const prev = seen.get(cq[i]);
			if (prev !== undefined) {
				a = prev;
				b = i;
			} else seen.set(cq[i], i);
		}
		if (a < 0) {
			out.push([cq, cf]);
			continue;
		}
		// cq[a] = cq[b]: the polygon is a..b−1 plus b..n−1, 0..a−1.
		work.push([cq.slice(a, b), cf.slice(a, b)]);
		const rq = new Uint32Array(n - (b - a)), rf = new Uint32Array(n - (b - a));
		rq.set(cq.subarray(b), 0);
		rq.set(cq.subarray(0, a), n - b);
		rf.set(cf.subarray(b), 0);
		rf.set(cf.subarray(0, a), n - b);
		work.push([rq, rf]);
	}
	return out;
}

/**
 * Liepa's dynamic programme over polygon q (vertex ids). Triangle (q[i], q[m], q[j]), i < m < j,
 * winds i → m → j; polygon edge (i, i + 1) borders mesh face qFace[i]. Returns the triangles as
 * vertex-id triples, or null when every triangulation uses a forbidden triangle.
 */
function triangulateLoop(
	p: Float64Array, ix: Uint32Array, q: Uint32Array, qFace: Uint32Array, hasEdge: (a: number, b: number) => boolean
): number[] | null {
	const n = q.length;
	// Unit normals of the mesh faces on the loop.
	const bn = new Float64Array(3 * n);
	for (let i = 0; i < n; i++) {
		const t = qFace[i];
		const a3 = 3 * ix[3 * t], b3 = 3 * ix[3 * t + 1], c3 = 3 * ix[3 * t + 2];
		unitNormal(p, a3, b3, c3, bn, 3 * i);
	}
	const nn = n * n;
	const angle = new Float64Array(nn).fill(Infinity);
	const area = new Float64Array(nn).fill(Infinity);
	const pick = new Int32Array(nn).fill(-1);
	const tn = new Float64Array(3 * nn); // unit normal of the triangle chosen for (i, j)
	const cand = new Float64Array(3);
	for (let i = 0; i + 1 < n; i++) {
		angle[i * n + i + 1] = 0;
		area[i * n + i + 1] = 0;
	}
	// Diagonal (i, j) may be used unless it is an existing mesh edge; (0, n − 1) is the loop's own edge.
	const diagOk = new Uint8Array(nn);
	for (let i = 0; i < n; i++) {
		for (let j = i + 2; j < n; j++) {
			diagOk[i * n + j] = q[i] !== q[j] && ((i === 0 && j === n - 1) || !hasEdge(q[i], q[j])) ? 1 : 0;
		}
	}
	for (let len = 2; len < n; len++) {
		for (let i = 0; i + len < n; i++) {
			const j = i + len, ij = i * n + j;
			if (!diagOk[ij]) continue;
			const qi = q[i], qj = q[j];
			const i3 = 3 * qi, j3 = 3 * qj;
			let bestA = Infinity, bestS = Infinity, bestM = -1;
			let bnx = 0, bny = 0, bnz = 0;
			for (let m = i + 1; m < j; m++) {
				const im = i * n + m, mj = m * n + j;
				if (area[im] === Infinity || area[mj] === Infinity) continue;
				const qm = q[m];
				if (qm === qi || qm === qj) continue;
				const m3 = 3 * qm;
				const twiceArea = unitNormal(p, i3, m3, j3, cand, 0);
				if (!(twiceArea > 0) || isDegenerateTriangle(p, qi, qm, qj)) continue;
				const cx = cand[0], cy = cand[1], cz = cand[2];
				// Dihedral angles across (i, m) and (m, j): with the loop's mesh face or the sub-polygon's triangle.
				let a = Math.max(angle[im], angle[mj]);
				const o1 = m === i + 1 ? 3 * i : 3 * im;
				const src1 = m === i + 1 ? bn : tn;
				a = Math.max(a, angleBetween(cx, cy, cz, src1[o1], src1[o1 + 1], src1[o1 + 2]));
				const o2 = j === m + 1 ? 3 * m : 3 * mj;
				const src2 = j === m + 1 ? bn : tn;
				a = Math.max(a, angleBetween(cx, cy, cz, src2[o2], src2[o2 + 1], src2[o2 + 2]));
				if (i === 0 && j === n - 1) a = Math.max(a, angleBetween(cx, cy, cz, bn[3 * (n - 1)], bn[3 * (n - 1) + 1], bn[3 * (n - 1) + 2]));
				const sArea = area[im] + area[mj] + 0.5 * twiceArea;
				if (a < bestA || (a === bestA && sArea < bestS)) {
					bestA = a;
					bestS = sArea;
					bestM = m;
					bnx = cx; bny = cy; bnz = cz;
				}
			}
			if (bestM < 0) continue;
			angle[ij] = bestA;
			area[ij] = bestS;
			pick[ij] = bestM;
			tn[3 * ij] = bnx; tn[3 * ij + 1] = bny; tn[3 * ij + 2] = bnz;
		}
	}
	if (pick[n - 1] < 0) return null;
	const out: number[] = [];
	const stack: number[] = [0, n - 1];
	while (stack.length) {
		const j = stack.pop()!, i = stack.pop()!;
		if (j - i < 2) continue;
		const m = pick[i * n + j];
		out.push(q[i], q[m], q[j]);
		stack.push(i, m, m, j);
	}
	return out;
}

/** Unit normal of (a, b, c) (offsets into p) into out[o..o+2]; returns twice the area. */
function unitNormal(p: Float64Array, a3: number, b3: number, c3: number, out: Float64Array, o: number): number {
	const ax = p[a3], ay = p[a3 + 1], az = p[a3 + 2];
	const ux = p[b3] - ax, uy = p[b3 + 1] - ay, uz = p[b3 + 2] - az;
	const vx = p[c3] - ax, vy = p[c3 + 1] - ay, vz = p[c3 + 2] - az;
	const nx = uy * vz - uz * vy, ny = uz * vx - ux * vz, nz = ux * vy - uy * vx;
	const len = Math.hypot(nx, ny, nz);
	const s = len > 0 ? 1 / len : 0;
	out[o] = nx * s;
	out[o + 1] = ny * s;
	out[o + 2] = nz * s;
	return len;
}

function angleBetween(ax: number, ay: number, az: number, bx: number, by: number, bz: number): number {
	const d = ax * bx + ay * by + az * bz;
	return Math.acos(d > 1 ? 1 : d < -1 ? -1 : d);
}

/** Exact test of the patch against itself, nearby mesh faces and earlier patches, on a small sub-mesh. */
function patchIntersects(
	p: Float64Array, ix: Uint32Array, tris: number[], near: number[], added: number[],
	mnx: number, mny: number, mnz: number, mxx: number, mxy: number, mxz: number
): boolean {
	const local = new Map<number, number>();
	const pos: number[] = [];
	const idx: number[] = [];
	const put = (v: number) => {
		let w = local.get(v);
		if (w === undefined) {
			w = pos.length / 3;
			pos.push(p[3 * v], p[3 * v + 1], p[3 * v + 2]);
			local.set(v, w);
		}
		idx.push(w);
	};
	for (let i = 0; i < tris.length; i++) put(tris[i]);
	const patchFaces = tris.length / 3;
	for (const t of near) {
		put(ix[3 * t]);
		put(ix[3 * t + 1]);
		put(ix[3 * t + 2]);
	}
	for (let f = 0; f < added.length; f += 3) {
		let tnx = Infinity, tny = Infinity, tnz = Infinity, txx = -Infinity, txy = -Infinity, txz = -Infinity;
		for (let k = 0; k < 3; k++) {
			const v3 = 3 * added[f + k];
			tnx = Math.min(tnx, p[v3]); txx = Math.max(txx, p[v3]);
			tny = Math.min(tny, p[v3 + 1]); txy = Math.max(txy, p[v3 + 1]);
			tnz = Math.min(tnz, p[v3 + 2]); txz = Math.max(txz, p[v3 + 2]);
		}
		if (tnx > mxx || txx < mnx || tny > mxy || txy < mny || tnz > mxz || txz < mnz) continue;
		put(added[f]);
		put(added[f + 1]);
		put(added[f + 2]);
	}
	const sub: MeshBuffers = { positions: Float64Array.from(pos), indices: Uint32Array.from(idx) };
	// Pairs whose smaller face index is a patch face are exactly the pairs involving the patch.
	return findSelfIntersections(sub, { faceRange: [0, patchFaces], sampleLimit: 0 }).pairs > 0;
}
