/**
 * Collapse edges shorter than minLength to their midpoint, shortest first (binary heap keyed by
 * length, stale entries skipped on pop). An edge is collapsed only when the result keeps the
 * topology and the shape locally:
 * - both ends are interior manifold vertices (one closed fan, every ring edge on two faces), so
 *   boundary and non-manifold edges are never touched;
 * - link condition (Dey et al. 1999; Edelsbrunner): the rings of the two ends share exactly the
 *   two opposite vertices, and those keep a valence of at least 3 afterwards;
 * - no surviving neighbour face turns by more than acos(MIN_NORMAL_COS) ≈ 78° or becomes exactly
 *   degenerate (exact predicates).
 * O(E log E + C · d²) for C collapses around vertices of valence d.
 */
import { isDegenerateTriangle } from '../predicates';
import { checkMesh, checkPositive, compactMesh, type RepairResult } from './common';
import type { MeshBuffers } from '../types';

/** Smallest cosine between a face normal before and after a collapse (common practice, 0.2). */
export const MIN_NORMAL_COS = 0.2;

export interface CollapseCounts {
	edgesCollapsed: number;
	/** Collapse attempts refused, by reason (an edge refused twice is counted twice). */
	skipped: {
		boundaryOrNonManifold: number;
		linkCondition: number;
		normalFlip: number;
		degenerateFace: number;
	};
	/** Edges still shorter than minLength in the result. */
	shortEdgesLeft: number;
	/** Faces with a repeated vertex index in the input (dropped; they carry no surface). */
	collapsedFacesDropped: number;
}

class EdgeHeap {
	key = new Float64Array(1024);
	u = new Uint32Array(1024);
	w = new Uint32Array(1024);
	size = 0;
	push(k: number, u: number, w: number): void {
		if (this.size === this.key.length) {
			const n = 2 * this.size;
			const key = new Float64Array(n), uu = new Uint32Array(n), ww = new Uint32Array(n);
			key.set(this.key);
			uu.set(this.u);
			ww.set(this.w);
			this.key = key;
			this.u = uu;
			this.w = ww;
		}
		const key = this.key, uu = this.u, ww = this.w;
		let i = this.size++;
		while (i > 0) {
			const parent = (i - 1) >> 1;
			if (key[parent] <= k) break;
			key[i] = key[parent];
			uu[i] = uu[parent];
			ww[i] = ww[parent];
			i = parent;
		}
		key[i] = k;
		uu[i] = u;
		ww[i] = w;
	}
	/** Removes the top; its entries are read from key[0], u[0], w[0] before calling. */
	pop(): void {
		const key = this.key, uu = this.u, ww = this.w;
		const n = --this.size;
		if (n === 0) return;
		const k = key[n], u = uu[n], w = ww[n];
		let i = 0;
		for (;;) {
			let c = 2 * i + 1;
			if (c >= n) break;
			if (c + 1 < n && key[c + 1] < key[c]) c++;
			if (key[c] >= k) break;
			key[i] = key[c];
			uu[i] = uu[c];
			ww[i] = ww[c];
			i = c;
		}
		key[i] = k;
		uu[i] = u;
		ww[i] = w;
	}
}

export function collapseShortEdges(mesh: MeshBuffers, minLength: number): RepairResult<CollapseCounts> {
	const op = 'collapse-short-edges';
	checkMesh(mesh, op);
	checkPositive(minLength, 'minLength', op);
	const P = mesh.positions.slice();
	const I = mesh.indices.slice();
	const vertCount = P.length / 3, triCount = I.length / 3;
	const dead = new Uint8Array(triCount);
	let collapsedFacesDropped = 0;
	for (let t = 0; t < triCount; t++) {
		const a = I[3 * t], b = I[3 * t + 1], c = I[3 * t + 2];
		if (a === b || b === c || a === c) {
			dead[t] = 1;
			collapsedFacesDropped++;
		}
	}
	// Corner lists per vertex: vHead[v] → cNext → … (−1 ends). Dead faces stay listed and are skipped.
	const vHead = new Int32Array(vertCount).fill(-1);
	const cNext = new Int32Array(3 * triCount).fill(-1);
	for (let c = 3 * triCount - 1; c >= 0; c--) {
		if (dead[(c / 3) | 0]) continue;
		const v = I[c];
		cNext[c] = vHead[v];
		vHead[v] = c;
	}
	const len = (a: number, b: number) => Math.hypot(P[3 * b] - P[3 * a], P[3 * b + 1] - P[3 * a + 1], P[3 * b + 2] - P[3 * a + 2]);
	const heap = new EdgeHeap();
	// Short edges from the halfedges, each edge once (a set of keys lo · V + hi; short edges are few).
	const queued = new Set<number>();
	for (let t = 0; t < triCount; t++) {
		if (dead[t]) continue;
		for (let k = 0; k < 3; k++) {
			const a = I[3 * t + k], b = I[3 * t + (k === 2 ? 0 : k + 1)];
			const l = len(a, b);
			if (!(l < minLength)) continue;
			const key = a < b ? a * vertCount + b : b * vertCount + a;
			if (queued.has(key)) continue;
			queued.add(key);
			heap.push(l, a, b);
		}
	}
	queued.clear();
	const skipped = { boundaryOrNonManifold: 0, linkCondition: 0, normalFlip: 0, degenerateFace: 0 };
	let edgesCollapsed = 0;
	// Scratch: stamps per vertex (ring counts) and the faces around the two ends.
	const stamp = new Int32Array(vertCount);
	const ringCount = new Int32Array(vertCount);
	let stampNow = 0;
	const faces: number[] = [];
	const before = new Float64Array(3);

	/** Live faces around v into `out`; returns false unless v is an interior manifold vertex. */
	const manifoldFan = (v: number, out: number[]): boolean => {
		out.length = 0;
		stampNow++;
		let ringSize = 0;
		for (let c = vHead[v]; c >= 0; c = cNext[c]) {
			const t = (c / 3) | 0;
			if (dead[t]) continue;
			out.push(t);
			const t3 = 3 * t;
			for (let k = 0; k < 3; k++) {
				const w = I[t3 + k];
				if (w === v) continue;
				if (stamp[w] !== stampNow) {
					stamp[w] = stampNow;
					ringCount[w] = 0;
					ringSize++;
				}
				ringCount[w]++;
			}
		}
		if (out.length < 3 || ringSize !== out.length) return false;
		for (const t of out) {
			for (let k = 0; k < 3; k++) {
				const w = I[3 * t + k];
				if (w !== v && ringCount[w] !== 2) return false;
			}
		}
		// One fan: walking across ring edges from the first face must reach every face.
		const t0 = out[0];
		let t = t0, steps = 0;
		let k0 = 0;
		while (I[3 * t + k0] !== v) k0++;
		let next = I[3 * t + ((k0 + 1) % 3)]; // edge (v, next) leads to the following face
		do {
			let found = -1;
			for (const g of out) {
				if (g === t) continue;
				const g3 = 3 * g;
				if (I[g3] === next || I[g3 + 1] === next || I[g3 + 2] === next) {
					found = g;
					break;
				}
			}
			if (found < 0) return false;
			t = found;
			let k = 0;
			while (I[3 * t + k] !== v) k++;
			const a = I[3 * t + ((k + 1) % 3)], b = I[3 * t + ((k + 2) % 3)];
			next = a === next ? b : a;
			steps++;
		} while (t !== t0 && steps <= out.length);
		return t === t0 && steps === out.length;
	};

	const fanU: number[] = [], fanV: number[] = [];
	while (heap.size > 0) {
		const key = heap.key[0];
		const u = heap.u[0], v = heap.w[0];
		heap.pop();
		if (vHead[u] === -2 || vHead[v] === -2) continue; // an end was merged away
		if (len(u, v) !== key) continue; // stale: an end moved since this entry was pushed
		if (!manifoldFan(u, fanU)) {
			if (edgeExists(u, v)) skipped.boundaryOrNonManifold++;
			continue;
		}
		// Shared faces of u and v.
		let s0 = -1, s1 = -1, extra = 0;
		for (const t of fanU) {
			const t3 = 3 * t;
			if (I[t3] === v || I[t3 + 1] === v || I[t3 + 2] === v) {
				if (s0 < 0) s0 = t;
				else if (s1 < 0) s1 = t;
				else extra++;
			}
		}
		if (s0 < 0) continue; // edge no longer exists
		if (s1 < 0 || extra || !manifoldFan(v, fanV)) {
			skipped.boundaryOrNonManifold++;
			continue;
		}
		const opp = (t: number) => {
			const t3 = 3 * t;
			for (let k = 0; k < 3; k++) if (I[t3 + k] !== u && I[t3 + k] !== v) return I[t3 + k];
			return -1;
		};
		const a = opp(s0), b = opp(s1);
		// Link condition on vertices: rings of u and v share exactly a and b.
		stampNow++;
		for (const t of fanU) for (let k = 0; k < 3; k++) stamp[I[3 * t + k]] = stampNow;
		let common = 0;
		stampNow++;
		const mark = stampNow;
		for (const t of fanV) {
			for (let k = 0; k < 3; k++) {
				const w = I[3 * t + k];
				if (w === u || w === v || stamp[w] === mark) continue;
				if (stamp[w] === mark - 1) common++;
				stamp[w] = mark;
			}
		}
		if (common !== 2 || a === b || valence(a) <= 3 || valence(b) <= 3) {
			skipped.linkCondition++;
			continue;
		}
		// Geometry: move u to the midpoint, look at every surviving face around u and v.
		const u3 = 3 * u, v3 = 3 * v;
		const ox = P[u3], oy = P[u3 + 1], oz = P[u3 + 2];
		const mx = 0.5 * (ox + P[v3]), my = 0.5 * (oy + P[v3 + 1]), mz = 0.5 * (oz + P[v3 + 2]);
		faces.length = 0;
		for (const t of fanU) if (t !== s0 && t !== s1) faces.push(t);
		for (const t of fanV) if (t !== s0 && t !== s1) faces.push(t);
		const normalsBefore: number[] = [];
		for (const t of faces) {
			cross(P, I[3 * t], I[3 * t + 1], I[3 * t + 2], before);
			normalsBefore.push(before[0], before[1], before[2]);
		}
		P[u3] = mx; P[u3 + 1] = my; P[u3 + 2] = mz;
		let reason = 0; // 1 normal flip, 2 degenerate
		for (let i = 0; i < faces.length && !reason; i++) {
			const t3 = 3 * faces[i];
			const x = I[t3] === v ? u : I[t3], y = I[t3 + 1] === v ? u : I[t3 + 1], z = I[t3 + 2] === v ? u : I[t3 + 2];
			if (isDegenerateTriangle(P, x, y, z)) {
				reason = 2;
				break;
			}
			cross(P, x, y, z, before);
			const bx = normalsBefore[3 * i], by = normalsBefore[3 * i + 1], bz = normalsBefore[3 * i + 2];
			const lb = Math.hypot(bx, by, bz), la = Math.hypot(before[0], before[1], before[2]);
			if (lb > 0 && (bx * before[0] + by * before[1] + bz * before[2]) <= MIN_NORMAL_COS * lb * la) reason = 1;
		}
		if (reason) {
			P[u3] = ox; P[u3 + 1] = oy; P[u3 + 2] = oz;
			if (reason === 1) skipped.normalFlip++;
			else skipped.degenerateFace++;
			continue;
		}
		// Apply: drop the two shared faces, hand v's corners to u.
		dead[s0] = 1;
		dead[s1] = 1;
		let tail = -1;
		for (let c = vHead[v]; c >= 0; c = cNext[c]) {
			I[c] = u;
			tail = c;
		}
		if (tail >= 0) {
			cNext[tail] = vHead[u];
			vHead[u] = vHead[v];
		}
		vHead[v] = -2;
		P[v3] = mx; P[v3 + 1] = my; P[v3 + 2] = mz;
		edgesCollapsed++;
		// Edges around the moved vertex changed length: queue the short ones again.
		stampNow++;
		for (let c = vHead[u]; c >= 0; c = cNext[c]) {
			const t = (c / 3) | 0;
			if (dead[t]) continue;
			for (let k = 0; k < 3; k++) {
				const w = I[3 * t + k];
				if (w === u || stamp[w] === stampNow) continue;
				stamp[w] = stampNow;
				const l = len(u, w);
				if (l < minLength) heap.push(l, u, w);
			}
		}
	}

	function edgeExists(x: number, y: number): boolean {
		for (let c = vHead[x]; c >= 0; c = cNext[c]) {
			const t = (c / 3) | 0;
			if (dead[t]) continue;
			if (I[3 * t] === y || I[3 * t + 1] === y || I[3 * t + 2] === y) return true;
		}
		return false;
	}
	function valence(x: number): number {
		let n = 0;
		for (let c = vHead[x]; c >= 0; c = cNext[c]) if (!dead[(c / 3) | 0]) n++;
		return n;
	}

	const keep = new Uint8Array(triCount);
	for (let t = 0; t < triCount; t++) keep[t] = dead[t] ? 0 : 1;
	const out = compactMesh(P, I, keep);
	// Distinct short edges left: few, so a set of keys lo · V + hi over the short halfedges.
	const shortKeys = new Set<number>();
	const q = out.positions, oi = out.indices, outVerts = q.length / 3;
	for (let h = 0; h < oi.length; h++) {
		const a = oi[h], b = oi[h % 3 === 2 ? h - 2 : h + 1];
		const a3 = 3 * a, b3 = 3 * b;
		if (Math.hypot(q[b3] - q[a3], q[b3 + 1] - q[a3 + 1], q[b3 + 2] - q[a3 + 2]) < minLength) shortKeys.add(a < b ? a * outVerts + b : b * outVerts + a);
	}
	const shortEdgesLeft = shortKeys.size;
	return { mesh: out, counts: { edgesCollapsed, skipped, shortEdgesLeft, collapsedFacesDropped } };
}

function cross(P: Float64Array, a: number, b: number, c: number, out: Float64Array): void {
	const a3 = 3 * a, b3 = 3 * b, c3 = 3 * c;
	const ax = P[a3], ay = P[a3 + 1], az = P[a3 + 2];
	const ux = P[b3] - ax, uy = P[b3 + 1] - ay, uz = P[b3 + 2] - az;
	const vx = P[c3] - ax, vy = P[c3 + 1] - ay, vz = P[c3 + 2] - az;
	out[0] = uy * vz - uz * vy;
	out[1] = uz * vx - ux * vz;
	out[2] = ux * vy - uy * vx;
}
