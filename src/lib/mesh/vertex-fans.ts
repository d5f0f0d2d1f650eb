/**
 * Vertex fans that can hold no counted self-intersection pair, found before the pair search so it
 * can pass over neighbouring faces without testing them.
 *
 * A vertex v is *clear* when its live faces (nonzero area; degenerate faces are not in the pair
 * search at all) form one closed fan f_0 … f_{k−1}, 3 ≤ k ≤ FAN_MAX, with f_t = {v, w_t, w_{t+1}}
 * (indices mod k) and w_0 … w_{k−1} distinct vertex ids, and when in one coordinate-plane
 * projection P (a coordinate dropped, so P is exact) every projected face (Pv, Pw_t, Pw_{t+1}) has
 * the same nonzero orientation and the projected link winds exactly once around Pv. Every sign is
 * an exact orient2d.
 *
 * Why no pair of faces around a clear vertex counts (pair rule: self-intersect.ts):
 * - the projected faces then lie in k closed wedges at Pv, each turning by an angle in (0, π),
 *   together once around: non-neighbouring wedges meet only at Pv, and each face has exactly one
 *   point over Pv (its projection is not degenerate), namely v. Faces sharing only v therefore meet
 *   only at v, which is on neither opposite edge: the one-shared-vertex rule does not count them;
 * - neighbours f_t, f_{t+1} share the edge v w_{t+1}; Pw_t and Pw_{t+2} lie strictly on opposite
 *   sides of its projection, and an exact projection of a common plane keeps sides, so even when
 *   coplanar they are no fold: the shared-edge rule does not count them.
 * A pair sharing one vertex is thus settled when that vertex is clear; a pair sharing an edge when
 * either end is clear (both faces are in that vertex's fan, as neighbours). Two faces on the same
 * three vertices never occur around a clear vertex (the link pairs {w_t, w_{t+1}} are distinct).
 *
 * Winding once, exactly: with c_t = orient(Pv, Pw_0, Pw_t), the wedges turn by less than π each,
 * so the link passes the direction of Pw_0 again before closing iff the signs c_1 … c_{k−1}
 * (c_1 has the wedges' sign s, c_{k−1} the opposite) ever go from −s back to s, or one is 0
 * (refused as well, conservatively).
 *
 * This module knows nothing of SvelteKit or storage; self-intersect.ts and its worker use it.
 */
import { orient2d as orient2dImport } from 'robust-predicates';

// Bound once (see predicates.ts).
const orient2d = orient2dImport;

/** Shewchuk's ccwerrboundA, as robust-predicates computes it. */
const CCW_ERR = (3 + 16 * 1.1102230246251565e-16) * 1.1102230246251565e-16;

/**
 * Sign-carrying orient2d(Pw_t, Pw_n, Pv) (same sign as orient2d(Pv, Pw_t, Pw_n)): the first float
 * filter of robust-predicates inlined on du/dv, the coordinate differences from Pv, which are the
 * very differences it computes; the exact predicate only when the filter cannot decide.
 */
function orientAt(du: Float64Array, dv: Float64Array, t: number, n: number, wu: Float64Array, wv: Float64Array, cu: number, cv: number): number {
	const l = dv[t] * du[n], r = du[t] * dv[n], det = l - r;
	if (Math.abs(det) >= CCW_ERR * Math.abs(l + r)) return det;
	// Both differences of one coordinate exactly 0 (float subtraction gives 0 only for equal
	// operands): the three points share that coordinate, the area is exactly 0. Common on grids.
	if ((du[t] === 0 && du[n] === 0) || (dv[t] === 0 && dv[n] === 0)) return 0;
	return orient2d(wu[t], wv[t], wu[n], wv[n], cu, cv);
}

/** Fans of more faces than this are not examined (their vertex is simply not clear). */
export const FAN_MAX = 32;

/**
 * Faces around each vertex, live faces only, in ascending face order: vertex v has
 * faces[start[v] .. start[v + 1]). start has vertCount + 1 entries, faces 3 × face count (only
 * start[vertCount] are used). Counting pass, prefix sums, then a fill from the back.
 */
export function vertexFaces(indices: Uint32Array, vertCount: number, live: Uint8Array, start: Uint32Array, faces: Uint32Array): void {
	const faceCount = indices.length / 3;
	start.fill(0, 0, vertCount + 1);
	// Each loop in a function of its own, so a fresh process compiles each once.
	countCorners(indices, faceCount, live, start);
	start[vertCount] = runningEnds(start, vertCount);
	fillFromBack(indices, faceCount, live, start, faces);
}

function countCorners(indices: Uint32Array, faceCount: number, live: Uint8Array, start: Uint32Array): void {
	for (let t = 0, t3 = 0; t < faceCount; t++, t3 += 3) {
		if (!live[t]) continue;
		start[indices[t3]]++;
		start[indices[t3 + 1]]++;
		start[indices[t3 + 2]]++;
	}
}

/** start[v] becomes the end of v's range (the fill below moves it to the start); returns the total. */
function runningEnds(start: Uint32Array, vertCount: number): number {
	let sum = 0;
	for (let v = 0; v < vertCount; v++) {
		sum += start[v];
		start[v] = sum;
	}
	return sum;
}

function fillFromBack(indices: Uint32Array, faceCount: number, live: Uint8Array, start: Uint32Array, faces: Uint32Array): void {
	for (let t = faceCount - 1, t3 = 3 * t; t >= 0; t--, t3 -= 3) {
		if (!live[t]) continue;
		faces[--start[indices[t3]]] = t;
		faces[--start[indices[t3 + 1]]] = t;
		faces[--start[indices[t3 + 2]]] = t;
	}
}

/**
 * clear[v] = 1 when vertex v is clear (see the file comment), else 0, for v in [from, to), from the
 * fans vertexFaces made. Returns how many of them are clear.
 */
export function clearVertices(
	positions: Float64Array,
	indices: Uint32Array,
	start: Uint32Array,
	faces: Uint32Array,
	from: number,
	to: number,
	clear: Uint8Array
): number {
	// Link pairs of the fan faces, then the link cycle w_0 … w_{k−1}.
	const px = new Int32Array(FAN_MAX), py = new Int32Array(FAN_MAX), w = new Int32Array(FAN_MAX);
	const wx = new Float64Array(FAN_MAX), wy = new Float64Array(FAN_MAX), wz = new Float64Array(FAN_MAX);
	const du = new Float64Array(FAN_MAX), dv = new Float64Array(FAN_MAX);
	let count = 0;
	for (let v = from; v < to; v++) {
		clear[v] = 0;
		const s = start[v], k = start[v + 1] - s;
		if (k < 3 || k > FAN_MAX) continue;
		for (let m = 0; m < k; m++) {
			const f3 = 3 * faces[s + m];
			const a = indices[f3], b = indices[f3 + 1], c = indices[f3 + 2];
			if (a === v) {
				px[m] = b;
				py[m] = c;
			} else if (b === v) {
				px[m] = c;
				py[m] = a;
			} else {
				px[m] = a;
				py[m] = b;
			}
		}
		// Walk the link: face 0 gives w_0, w_1; each next face is the unused one holding w_t, and no
		// link vertex may come twice.
		w[0] = px[0];
		w[1] = py[0];
		let ok = true;
		let used = 1;
		for (let t = 1; t < k && ok; t++) {
			const cur = w[t];
			let m = 1;
			while (m < k && (used & (1 << m) || (px[m] !== cur && py[m] !== cur))) m++;
			if (m === k) {
				ok = false;
				break;
			}
			used |= 1 << m;
			const other = px[m] === cur ? py[m] : px[m];
			if (t < k - 1) {
				for (let b = 0; b <= t; b++) if (w[b] === other) ok = false;
				w[t + 1] = other;
			} else ok = other === w[0];
		}
		if (!ok) continue;
		// Projection: drop the axis of the largest component of the fan's summed (float) normal.
		const v3 = 3 * v;
		const vx = positions[v3], vy = positions[v3 + 1], vz = positions[v3 + 2];
		for (let t = 0; t < k; t++) {
			const p3 = 3 * w[t];
			wx[t] = positions[p3];
			wy[t] = positions[p3 + 1];
			wz[t] = positions[p3 + 2];
		}
		let nx = 0, ny = 0, nz = 0;
		for (let t = 0, n = 1; t < k; t++, n = n + 1 === k ? 0 : n + 1) {
			const ux = wx[t] - vx, uy = wy[t] - vy, uz = wz[t] - vz;
			const qx = wx[n] - vx, qy = wy[n] - vy, qz = wz[n] - vz;
			nx += uy * qz - uz * qy;
			ny += uz * qx - ux * qz;
			nz += ux * qy - uy * qx;
		}
		const ax = Math.abs(nx), ay = Math.abs(ny), az = Math.abs(nz);
		const axis = ax >= ay ? (ax >= az ? 0 : 2) : ay >= az ? 1 : 2;
		// Kept coordinates as in predicates.ts dropAxis: 0 → (y, z), 1 → (z, x), 2 → (x, y).
		const wu = axis === 0 ? wy : axis === 1 ? wz : wx, wv = axis === 0 ? wz : axis === 1 ? wx : wy;
		const cu = axis === 0 ? vy : axis === 1 ? vz : vx, cv = axis === 0 ? vz : axis === 1 ? vx : vy;
		for (let t = 0; t < k; t++) {
			du[t] = wu[t] - cu;
			dv[t] = wv[t] - cv;
		}
		// Every wedge turns the same way. orient(Pv, Pw_t, Pw_n) has the sign of orient(Pw_t, Pw_n, Pv),
		// whose float filter works on the differences from Pv computed once above.
		const o0 = orientAt(du, dv, 0, 1, wu, wv, cu, cv);
		if (o0 === 0) continue;
		const sgn = o0 > 0 ? 1 : -1;
		for (let t = 1, n = 2; t < k && ok; t++, n = n + 1 === k ? 0 : n + 1) ok = orientAt(du, dv, t, n, wu, wv, cu, cv) * sgn > 0;
		if (!ok) continue;
		// Once around: the angle of Pw_t − Pv from Pw_0 − Pv grows by less than π a step; it stays
		// below 2π iff its phase never falls back: (0, π) where c_t = orient(Pv, Pw_0, Pw_t) has the
		// wedges' sign, π (c_t = 0, opposite direction), (π, 2π) (the other sign); the same direction
		// as Pw_0 (c_t = 0) means once around already. Collinear directions compare by the sign of
		// one coordinate difference, exact in floating point.
		const du0 = du[0], dv0 = dv[0];
		let phase = 0;
		for (let t = 2; t < k - 1 && ok; t++) {
			const c = orientAt(du, dv, 0, t, wu, wv, cu, cv) * sgn;
			let p: number;
			if (c > 0) p = 0;
			else if (c < 0) p = 2;
			else {
				const same = du0 !== 0 ? du[t] > 0 === du0 > 0 : dv[t] > 0 === dv0 > 0;
				p = same ? 3 : 1;
			}
			if (p < phase || p === 3) ok = false;
			phase = p;
		}
		if (!ok) continue;
		clear[v] = 1;
		count++;
	}
	return count;
}
