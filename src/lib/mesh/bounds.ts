/**
 * The one bounding-box scan: axis-aligned bounds of xyz triples, as
 * [minX, minY, minZ, maxX, maxY, maxZ] (min = +Infinity, max = −Infinity when there are no points),
 * and of projected xy pairs as [minX, minY, maxX, maxY] (planeBounds, indexedPlaneBounds).
 */
export type Bounds6 = Float64Array;

/** Bounds of every triple of `xyz` (stride 3). */
export function pointBounds(xyz: Float64Array | Float32Array, out: Bounds6 = new Float64Array(6)): Bounds6 {
	let x0 = Infinity, y0 = Infinity, z0 = Infinity, x1 = -Infinity, y1 = -Infinity, z1 = -Infinity;
	for (let i = 0; i + 2 < xyz.length; i += 3) {
		const x = xyz[i], y = xyz[i + 1], z = xyz[i + 2];
		if (x < x0) x0 = x;
		if (x > x1) x1 = x;
		if (y < y0) y0 = y;
		if (y > y1) y1 = y;
		if (z < z0) z0 = z;
		if (z > z1) z1 = z;
	}
	return setBounds(out, x0, y0, z0, x1, y1, z1);
}

/** Bounds of the triples `xyz[3 * ids[i] ..]` for i in [from, to): e.g. the vertices faces refer to. */
export function indexedBounds(xyz: Float64Array, ids: ArrayLike<number>, from = 0, to = ids.length, out: Bounds6 = new Float64Array(6)): Bounds6 {
	let x0 = Infinity, y0 = Infinity, z0 = Infinity, x1 = -Infinity, y1 = -Infinity, z1 = -Infinity;
	for (let i = from; i < to; i++) {
		const v3 = 3 * ids[i];
		const x = xyz[v3], y = xyz[v3 + 1], z = xyz[v3 + 2];
		if (x < x0) x0 = x;
		if (x > x1) x1 = x;
		if (y < y0) y0 = y;
		if (y > y1) y1 = y;
		if (z < z0) z0 = z;
		if (z > z1) z1 = z;
	}
	return setBounds(out, x0, y0, z0, x1, y1, z1);
}

function setBounds(out: Bounds6, x0: number, y0: number, z0: number, x1: number, y1: number, z1: number): Bounds6 {
	out[0] = x0;
	out[1] = y0;
	out[2] = z0;
	out[3] = x1;
	out[4] = y1;
	out[5] = z1;
	return out;
}

/** Bounds of the first `count` pairs of `xy` (stride 2), out = [x0, y0, x1, y1] (written as they change). */
export function planeBounds(xy: Float64Array, count: number, out: Float64Array = new Float64Array(4)): Float64Array {
	let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
	out[0] = x0;
	out[1] = y0;
	out[2] = x1;
	out[3] = y1;
	for (let v = 0; v < count; v++) {
		const a = xy[2 * v], b = xy[2 * v + 1];
		if (a < x0) out[0] = x0 = a;
		if (a > x1) out[2] = x1 = a;
		if (b < y0) out[1] = y0 = b;
		if (b > y1) out[3] = y1 = b;
	}
	return out;
}

/** Bounds of the pairs `xy[2 * ids[i] ..]` for every i (e.g. the projected corners faces use), as planeBounds. */
export function indexedPlaneBounds(xy: Float64Array, ids: Uint32Array, out: Float64Array = new Float64Array(4)): Float64Array {
	let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
	out[0] = x0;
	out[1] = y0;
	out[2] = x1;
	out[3] = y1;
	for (let i = 0; i < ids.length; i++) {
		const v2 = 2 * ids[i];
		const a = xy[v2], b = xy[v2 + 1];
		if (a < x0) out[0] = x0 = a;
		if (a > x1) out[2] = x1 = a;
		if (b < y0) out[1] = y0 = b;
		if (b > y1) out[3] = y1 = b;
	}
	return out;
}
