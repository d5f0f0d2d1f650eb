/**
 * Silhouette (frontal) area of a small mesh, exactly: the area of the union of its projected
 * triangles, by integer polygon clipping (clipper-lib, Vatti's sweep on integer coordinates, so
 * touching and shared edges are decided exactly). The same faces as the raster in projection.ts:
 * skipFace[t] = 1 skips a face, and of a face with oneSided[t] = 1 (closed consistent shells) only
 * the facing side counts, as the other facing lies in the shadow of that shell anyway.
 *
 * The projected corners are snapped to an integer grid: translated to the box centre and scaled by
 * a power of two s so that every coordinate is at most SNAP_RANGE in size. At that size every
 * product of two coordinates is a whole number below 2^53, so the facing of each snapped triangle
 * and the shoelace area of the clipped rings are computed without rounding. Error bound, in three
 * parts (the projected corners themselves are taken as computed, as the raster takes them):
 *  - snapping: each corner moves by at most ε = √2 (m / s + 2^-52 R) (m ≤ 0.5 the largest snapping
 *    step seen, R the largest centred coordinate); a triangle T and its snapped T′ then differ by at most (perim T + perim T′) ε + 2πε²
 *    in area (each lies within ε of the other), and the areas of two unions differ by at most the
 *    sum of those differences. Summed over every face that is not skipped.
 *  - crossings: the clipper rounds each crossing of two edges to the nearest grid point (by at
 *    most r = √2 / 2 grid units); moving the corners p_i of a ring by at most r changes its area by at
 *    most r Σ |p_{i+1} − p_{i−1}| / 2 + n r² / 2 (from the shoelace formula).
 *  - the final division: one rounding, relative 2^-52.
 */
import ClipperLib from 'clipper-lib';

export interface UnionArea {
	area: number;
	errorBound: number;
	/** Outline rings of the union (outer rings and holes). */
	rings: number;
	/** Triangles handed to the clipper. */
	triangles: number;
}

/** Largest snapped coordinate: below clipper-lib's range for plain double arithmetic (2^25.5). */
const SNAP_RANGE = 2 ** 25;
const U = 2 ** -52;

/**
 * Area of the union of the projected triangles. proj holds the projected corners (x, y per vertex).
 * Throws when the clipper reports a failure (the caller falls back to the raster).
 */
export function unionSilhouetteArea(proj: Float64Array, indices: Uint32Array, triCount: number, skipFace: Uint8Array, oneSided?: Uint8Array): UnionArea {
	let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
	for (let t = 0; t < triCount; t++) {
		if (skipFace[t]) continue;
		for (let k = 0; k < 3; k++) {
			const v2 = 2 * indices[3 * t + k];
			const x = proj[v2], y = proj[v2 + 1];
			if (x < x0) x0 = x;
			if (x > x1) x1 = x;
			if (y < y0) y0 = y;
			if (y > y1) y1 = y;
		}
	}
	if (!(x1 > x0) || !(y1 > y0)) return { area: 0, errorBound: 0, rings: 0, triangles: 0 };
	const cx = 0.5 * (x0 + x1), cy = 0.5 * (y0 + y1);
	const R = Math.max(cx - x0, x1 - cx, cy - y0, y1 - cy);
	let s = 2 ** Math.floor(Math.log2(SNAP_RANGE / R));
	while (R * s > SNAP_RANGE) s /= 2;
	const paths: { X: number; Y: number }[][] = [];
	let perimeters = 0, counted = 0, moved = 0;
	for (let t = 0; t < triCount; t++) {
		if (skipFace[t]) continue;
		const t3 = 3 * t;
		const a2 = 2 * indices[t3], b2 = 2 * indices[t3 + 1], c2 = 2 * indices[t3 + 2];
		const ax = Math.round((proj[a2] - cx) * s), ay = Math.round((proj[a2 + 1] - cy) * s);
		const bx = Math.round((proj[b2] - cx) * s), by = Math.round((proj[b2 + 1] - cy) * s);
		const qx = Math.round((proj[c2] - cx) * s), qy = Math.round((proj[c2 + 1] - cy) * s);
		moved = Math.max(moved, Math.abs(ax - (proj[a2] - cx) * s), Math.abs(ay - (proj[a2 + 1] - cy) * s), Math.abs(bx - (proj[b2] - cx) * s), Math.abs(by - (proj[b2 + 1] - cy) * s), Math.abs(qx - (proj[c2] - cx) * s), Math.abs(qy - (proj[c2 + 1] - cy) * s));
		// Snapped perimeter, in grid units; the true one is at most 6ε (model units) longer.
		perimeters += Math.hypot(bx - ax, by - ay) + Math.hypot(qx - bx, qy - by) + Math.hypot(ax - qx, ay - qy);
		counted++;
		const cross = (bx - ax) * (qy - ay) - (by - ay) * (qx - ax);
		if (cross === 0) continue; // no area
		if (cross < 0 && oneSided !== undefined && oneSided[t] === 1) continue;
		// Every triangle counter-clockwise, so the union is the region of positive winding.
		if (cross > 0) paths.push([{ X: ax, Y: ay }, { X: bx, Y: by }, { X: qx, Y: qy }]);
		else paths.push([{ X: ax, Y: ay }, { X: qx, Y: qy }, { X: bx, Y: by }]);
	}
	// Union by halves: small groups first, then pairs of results (each sweep stays short).
	const bound = { spread: 0, corners: 0 };
	const solution = paths.length > 0 ? unionRange(paths, 0, paths.length, bound) : [];
	// Twice the area in grid units², exactly: each term is a whole number below 2^52, and the running
	// sum moves into a BigInt before it could pass 2^53.
	let twice = 0n, acc = 0;
	for (const ring of solution) {
		const n = ring.length;
		for (let i = 0; i < n; i++) {
			const p = ring[i], q = ring[(i + 1) % n];
			acc += p.X * q.Y - q.X * p.Y;
			if (acc > 2 ** 52 || acc < -(2 ** 52)) (twice += BigInt(acc)), (acc = 0);
		}
	}
	twice += BigInt(acc);
	if (twice < 0n) twice = -twice;
	const area = Number(twice) / (2 * s * s);
	// Largest snapping step (at most half a grid step), plus the rounding of the centring subtraction.
	const eps = Math.SQRT2 * (moved / s + U * R);
	const snap = ((2 * perimeters) / s + 6 * eps * counted) * eps + 2 * Math.PI * eps * eps * counted;
	const r = Math.SQRT1_2 / s;
	const crossings = (r * bound.spread) / (2 * s) + (bound.corners * r * r) / 2;
	// The bound's own arithmetic rounds too: a relative margin far above its few roundings.
	return { area, errorBound: (snap + crossings + U * area) * (1 + 1e-9), rings: solution.length, triangles: paths.length };
}

type Ring = { X: number; Y: number }[];
/** Triangles per first-level union. */
const GROUP = 64;

/**
 * Union of paths[lo .. hi): one sweep for a small group, else the union of the two halves' unions.
 * Adds each sweep's output to bound (Σ |p_{i+1} − p_{i−1}| and corners: the crossings it rounded lie
 * among them), as the rounding of every sweep adds to the error.
 */
function unionRange(paths: Ring[], lo: number, hi: number, bound: { spread: number; corners: number }): Ring[] {
	const c = new ClipperLib.Clipper();
	if (hi - lo <= GROUP) c.AddPaths(lo === 0 && hi === paths.length ? paths : paths.slice(lo, hi), ClipperLib.PolyType.ptSubject, true);
	else {
		const mid = (lo + hi) >> 1;
		c.AddPaths(unionRange(paths, lo, mid, bound), ClipperLib.PolyType.ptSubject, true);
		c.AddPaths(unionRange(paths, mid, hi, bound), ClipperLib.PolyType.ptClip, true);
	}
	const out: Ring[] = [];
	// Positive winding: the triangles are counter-clockwise, and so are the outer rings of a union
	// (its holes clockwise, inside an outer ring, so their winding stays 0 or positive).
	if (!c.Execute(ClipperLib.ClipType.ctUnion, out, ClipperLib.PolyFillType.pftPositive, ClipperLib.PolyFillType.pftPositive)) throw new Error('polygon union failed');
	for (const ring of out) {
		const n = ring.length;
		bound.corners += n;
		for (let i = 0; i < n; i++) {
			const q = ring[(i + 1) % n], o = ring[(i + n - 1) % n];
			bound.spread += Math.hypot(q.X - o.X, q.Y - o.Y);
		}
	}
	return out;
}
