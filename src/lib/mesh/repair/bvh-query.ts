/** Queries over the flat BVH of bvh.ts: faces whose boxes overlap a box, closest point on a triangle mesh. */
import { buildBvh, type FlatBvh } from '../bvh';

export interface FaceBvh {
	bvh: FlatBvh;
	/** 6 per item (face slot in `faces`): closed box. */
	boxes: Float64Array;
	/** Item → face index. */
	faces: Uint32Array;
}

/** BVH over the boxes of the faces with skip[t] = 0 (all faces when skip is omitted). O(F) after the radix sort. */
export function buildFaceBvh(positions: Float64Array, indices: Uint32Array, skip?: Uint8Array, leafSize = 4): FaceBvh {
	const triCount = indices.length / 3;
	let n = 0;
	for (let t = 0; t < triCount; t++) if (!skip || !skip[t]) n++;
	const faces = new Uint32Array(n);
	const boxes = new Float64Array(6 * n);
	for (let t = 0, k = 0; t < triCount; t++) {
		if (skip && skip[t]) continue;
		faces[k] = t;
		const a3 = 3 * indices[3 * t], b3 = 3 * indices[3 * t + 1], c3 = 3 * indices[3 * t + 2];
		const o = 6 * k;
		for (let d = 0; d < 3; d++) {
			const pa = positions[a3 + d], pb = positions[b3 + d], pc = positions[c3 + d];
			boxes[o + d] = pa < pb ? (pa < pc ? pa : pc) : pb < pc ? pb : pc;
			boxes[o + 3 + d] = pa > pb ? (pa > pc ? pa : pc) : pb > pc ? pb : pc;
		}
		k++;
	}
	return { bvh: buildBvh(boxes, n, leafSize), boxes, faces };
}

/** Appends to `out` the faces whose boxes overlap the closed box [min, max]. */
export function facesInBox(fb: FaceBvh, mnx: number, mny: number, mnz: number, mxx: number, mxy: number, mxz: number, out: number[]): void {
	const { bvh, boxes, faces } = fb;
	if (faces.length === 0) return;
	const { bounds, firstChild, start, count, order } = bvh;
	const stack: number[] = [0];
	while (stack.length) {
		const node = stack.pop()!;
		const o = 6 * node;
		if (bounds[o] > mxx || bounds[o + 3] < mnx || bounds[o + 1] > mxy || bounds[o + 4] < mny || bounds[o + 2] > mxz || bounds[o + 5] < mnz) continue;
		const fc = firstChild[node];
		if (fc >= 0) {
			stack.push(fc, fc + 1);
			continue;
		}
		for (let s = start[node], e = s + count[node]; s < e; s++) {
			const item = order[s], b = 6 * item;
			if (boxes[b] > mxx || boxes[b + 3] < mnx || boxes[b + 1] > mxy || boxes[b + 4] < mny || boxes[b + 2] > mxz || boxes[b + 5] < mnz) continue;
			out.push(faces[item]);
		}
	}
}

/** Same as facesInBox by scanning every face (no BVH): cheaper than a build for a few queries. */
export function facesInBoxScan(
	positions: Float64Array, indices: Uint32Array, skip: Uint8Array | undefined,
	mnx: number, mny: number, mnz: number, mxx: number, mxy: number, mxz: number, out: number[]
): void {
	const triCount = indices.length / 3;
	for (let t = 0; t < triCount; t++) {
		if (skip && skip[t]) continue;
		const a3 = 3 * indices[3 * t], b3 = 3 * indices[3 * t + 1], c3 = 3 * indices[3 * t + 2];
		const ax = positions[a3], bx = positions[b3], cx = positions[c3];
		if ((ax > mxx && bx > mxx && cx > mxx) || (ax < mnx && bx < mnx && cx < mnx)) continue;
		const ay = positions[a3 + 1], by = positions[b3 + 1], cy = positions[c3 + 1];
		if ((ay > mxy && by > mxy && cy > mxy) || (ay < mny && by < mny && cy < mny)) continue;
		const az = positions[a3 + 2], bz = positions[b3 + 2], cz = positions[c3 + 2];
		if ((az > mxz && bz > mxz && cz > mxz) || (az < mnz && bz < mnz && cz < mnz)) continue;
		out.push(t);
	}
}

/**
 * Closest point on triangle (a, b, c) to point q, by Voronoi regions of the vertices, edges and
 * face (Ericson, Real-Time Collision Detection, 2005, §5.1.5). Writes the point into out[0..2] and
 * returns the squared distance.
 */
export function closestOnTriangle(
	qx: number, qy: number, qz: number,
	ax: number, ay: number, az: number,
	bx: number, by: number, bz: number,
	cx: number, cy: number, cz: number,
	out: Float64Array
): number {
	const abx = bx - ax, aby = by - ay, abz = bz - az;
	const acx = cx - ax, acy = cy - ay, acz = cz - az;
	const apx = qx - ax, apy = qy - ay, apz = qz - az;
	const d1 = abx * apx + aby * apy + abz * apz, d2 = acx * apx + acy * apy + acz * apz;
	let rx: number, ry: number, rz: number;
	if (d1 <= 0 && d2 <= 0) {
		rx = ax; ry = ay; rz = az;
	} else {
		const bpx = qx - bx, bpy = qy - by, bpz = qz - bz;
		const d3 = abx * bpx + aby * bpy + abz * bpz, d4 = acx * bpx + acy * bpy + acz * bpz;
		const cpx = qx - cx, cpy = qy - cy, cpz = qz - cz;
		const d5 = abx * cpx + aby * cpy + abz * cpz, d6 = acx * cpx + acy * cpy + acz * cpz;
		const vc = d1 * d4 - d3 * d2, vb = d5 * d2 - d1 * d6, va = d3 * d6 - d5 * d4;
		if (d3 >= 0 && d4 <= d3) {
			rx = bx; ry = by; rz = bz;
		} else if (d6 >= 0 && d5 <= d6) {
			rx = cx; ry = cy; rz = cz;
		} else if (vc <= 0 && d1 >= 0 && d3 <= 0) {
			const v = d1 / (d1 - d3);
			rx = ax + v * abx; ry = ay + v * aby; rz = az + v * abz;
		} else if (vb <= 0 && d2 >= 0 && d6 <= 0) {
			const w = d2 / (d2 - d6);
			rx = ax + w * acx; ry = ay + w * acy; rz = az + w * acz;
		} else if (va <= 0 && d4 - d3 >= 0 && d5 - d6 >= 0) {
			const w = (d4 - d3) / (d4 - d3 + (d5 - d6));
			rx = bx + w * (cx - bx); ry = by + w * (cy - by); rz = bz + w * (cz - bz);
		} else {
			const den = va + vb + vc;
			if (!(den > 0)) {
				// Degenerate (zero-area) triangle that fell through: nearest corner is close enough for a bound.
				rx = ax; ry = ay; rz = az;
			} else {
				const v = vb / den, w = vc / den;
				rx = ax + abx * v + acx * w; ry = ay + aby * v + acy * w; rz = az + abz * v + acz * w;
			}
		}
	}
	out[0] = rx; out[1] = ry; out[2] = rz;
	const dx = qx - rx, dy = qy - ry, dz = qz - rz;
	return dx * dx + dy * dy + dz * dz;
}

/**
 * Squared distance from q to the nearest face in the BVH (Infinity for an empty one), depth-first
 * with the nearer child first and pruning by box distance. `stack` is caller-owned scratch.
 */
export function closestSquaredDistance(
	fb: FaceBvh, positions: Float64Array, indices: Uint32Array,
	qx: number, qy: number, qz: number, stack: Int32Array, tmp: Float64Array
): number {
	const { bvh, faces } = fb;
	if (faces.length === 0) return Infinity;
	const { bounds, firstChild, start, count, order } = bvh;
	let best = Infinity;
	let sp = 0;
	stack[sp++] = 0;
	while (sp > 0) {
		const node = stack[--sp];
		const o = 6 * node;
		if (boxDist2(bounds, o, qx, qy, qz) >= best) continue;
		const fc = firstChild[node];
		if (fc >= 0) {
			const dl = boxDist2(bounds, 6 * fc, qx, qy, qz), dr = boxDist2(bounds, 6 * fc + 6, qx, qy, qz);
			// Push the farther child first so the nearer one is popped first.
			if (dl < dr) {
				if (dr < best) stack[sp++] = fc + 1;
				if (dl < best) stack[sp++] = fc;
			} else {
				if (dl < best) stack[sp++] = fc;
				if (dr < best) stack[sp++] = fc + 1;
			}
			continue;
		}
		for (let s = start[node], e = s + count[node]; s < e; s++) {
			const t3 = 3 * faces[order[s]];
			const a3 = 3 * indices[t3], b3 = 3 * indices[t3 + 1], c3 = 3 * indices[t3 + 2];
			const d2 = closestOnTriangle(
				qx, qy, qz,
				positions[a3], positions[a3 + 1], positions[a3 + 2],
				positions[b3], positions[b3 + 1], positions[b3 + 2],
				positions[c3], positions[c3 + 1], positions[c3 + 2],
				tmp
			);
			if (d2 < best) best = d2;
		}
	}
	return best;
}

function boxDist2(b: Float64Array, o: number, x: number, y: number, z: number): number {
	const dx = x < b[o] ? b[o] - x : x > b[o + 3] ? x - b[o + 3] : 0;
	const dy = y < b[o + 1] ? b[o + 1] - y : y > b[o + 4] ? y - b[o + 4] : 0;
	const dz = z < b[o + 2] ? b[o + 2] - z : z > b[o + 5] ? z - b[o + 5] : 0;
	return dx * dx + dy * dy + dz * dz;
}
