/**
 * Polygons of more than three corners, as OBJ and PLY files hold them, are read as a fan: corner 0
 * with each later pair of corners. A fan covers a convex polygon exactly, but not a concave one (an
 * L-shaped CAD face, a dart-shaped quad): started at the wrong corner it lays triangles outside the
 * polygon that overlap others, and the check would report crossings and folds the file does not
 * have. After reading, each split polygon is tested in its own plane (Newell's normal, the axis it
 * faces most dropped); a concave one is split again by ear clipping (earcut), with every triangle
 * turned the polygon's way. A polygon earcut cannot split into its n − 2 triangles (crossing
 * itself, all corners on a line) keeps its fan. Convex polygons keep their fan, triangle for
 * triangle, so files of quads and convex faces read exactly as before.
 */
import earcut from 'earcut';

/** Growable list of split polygons, as pairs (first triangle, corner count). */
export class SplitPolygons {
	list = new Uint32Array(64);
	count = 0;
	add(firstTri: number, corners: number): void {
		if (2 * this.count + 2 > this.list.length) {
			const next = new Uint32Array(2 * this.list.length);
			next.set(this.list);
			this.list = next;
		}
		this.list[2 * this.count] = firstTri;
		this.list[2 * this.count + 1] = corners;
		this.count++;
	}
}

/**
 * Re-splits the concave polygons among those listed, in place in indices (each keeps its n − 2
 * triangles at the same place). Returns how many were re-split.
 */
export function splitConcavePolygons(positions: Float64Array, indices: Uint32Array, polys: SplitPolygons): number {
	let changed = 0;
	let corners = new Uint32Array(16);
	let flat = new Float64Array(32);
	for (let k = 0; k < polys.count; k++) {
		const first = polys.list[2 * k], n = polys.list[2 * k + 1];
		if (n > corners.length) {
			corners = new Uint32Array(2 * n);
			flat = new Float64Array(4 * n);
		}
		// The fan's triangles are (c0, c1, c2), (c0, c2, c3), …: the corners read back from them.
		const o = 3 * first;
		corners[0] = indices[o];
		corners[1] = indices[o + 1];
		for (let t = 0; t < n - 2; t++) corners[t + 2] = indices[o + 3 * t + 2];
		const area = project(positions, corners, n, flat);
		if (area === 0 || isConvex(flat, n, area)) continue;
		const tris = earcut(flat.subarray(0, 2 * n) as unknown as number[]);
		if (tris.length !== 3 * (n - 2)) continue;
		for (let t = 0; t < n - 2; t++) {
			let a = tris[3 * t], b = tris[3 * t + 1];
			const c = tris[3 * t + 2];
			// Turned the polygon's way: earcut does not promise an orientation.
			if (Math.sign(cross(flat, a, b, c)) !== Math.sign(area)) [a, b] = [b, a];
			indices[o + 3 * t] = corners[a];
			indices[o + 3 * t + 1] = corners[b];
			indices[o + 3 * t + 2] = corners[c];
		}
		changed++;
	}
	return changed;
}

/**
 * Writes the corners' coordinates in the plane of the axis the polygon faces most (Newell's normal)
 * into flat (x0, y0, x1, y1, …), the two kept axes in cyclic order so the turn is the polygon's own.
 * Returns twice the signed area in that plane (positive: counter-clockwise seen against the normal).
 */
function project(p: Float64Array, c: Uint32Array, n: number, flat: Float64Array): number {
	let nx = 0, ny = 0, nz = 0;
	for (let i = 0; i < n; i++) {
		const a = 3 * c[i], b = 3 * c[(i + 1) % n];
		nx += (p[a + 1] - p[b + 1]) * (p[a + 2] + p[b + 2]);
		ny += (p[a + 2] - p[b + 2]) * (p[a] + p[b]);
		nz += (p[a] - p[b]) * (p[a + 1] + p[b + 1]);
	}
	const ax = Math.abs(nx), ay = Math.abs(ny), az = Math.abs(nz);
	// Drop the dominant axis d; keep (d + 1, d + 2) so the projected turn matches the normal's sign.
	const d = ax >= ay && ax >= az ? 0 : ay >= az ? 1 : 2;
	const u = (d + 1) % 3, w = (d + 2) % 3;
	for (let i = 0; i < n; i++) {
		flat[2 * i] = p[3 * c[i] + u];
		flat[2 * i + 1] = p[3 * c[i] + w];
	}
	let area = 0;
	for (let i = 0; i < n; i++) {
		const j = (i + 1) % n;
		area += flat[2 * i] * flat[2 * j + 1] - flat[2 * j] * flat[2 * i + 1];
	}
	return area;
}

/** (b − a) × (c − a) of three projected corners. */
function cross(f: Float64Array, a: number, b: number, c: number): number {
	return (f[2 * b] - f[2 * a]) * (f[2 * c + 1] - f[2 * a + 1]) - (f[2 * b + 1] - f[2 * a + 1]) * (f[2 * c] - f[2 * a]);
}

/** No corner turns against the polygon's own turn (corners on a line count as convex). */
function isConvex(f: Float64Array, n: number, area: number): boolean {
	for (let i = 0; i < n; i++) {
		const t = cross(f, (i + n - 1) % n, i, (i + 1) % n);
		if (t !== 0 && Math.sign(t) !== Math.sign(area)) return false;
	}
	return true;
}
