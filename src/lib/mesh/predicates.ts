/**
 * Exact orientation signs over robust-predicates (Shewchuk's adaptive-precision orient2d/orient3d),
 * with the sign convention this engine uses: positive means counter-clockwise / in front of the
 * CCW normal. robust-predicates itself returns the opposite sign (checked in predicates.test.ts).
 */
import { orient2d as orient2dImport, orient3d as orient3dImport } from 'robust-predicates';

// Bound once: some loaders (tsx, vite-node) turn each use of an imported binding into a getter call,
// which costs more than the float filter in the hot loops.
const orient2d = orient2dImport;
const orient3d = orient3dImport;

/** Sign (−1, 0, 1) of the area of 2D triangle a, b, c; +1 when counter-clockwise. Exact. */
export function ccw2(ax: number, ay: number, bx: number, by: number, cx: number, cy: number): number {
	const d = orient2d(ax, ay, bx, by, cx, cy);
	return d < 0 ? 1 : d > 0 ? -1 : 0;
}

/**
 * Sign (−1, 0, 1) of (p − a) · ((b − a) × (c − a)): +1 when p is on the side the CCW normal of
 * triangle a, b, c points to. Exact.
 */
export function side3(
	ax: number, ay: number, az: number,
	bx: number, by: number, bz: number,
	cx: number, cy: number, cz: number,
	px: number, py: number, pz: number
): number {
	const d = orient3d(ax, ay, az, bx, by, bz, cx, cy, cz, px, py, pz);
	return d < 0 ? 1 : d > 0 ? -1 : 0;
}

/**
 * Triangle with vertex indices a, b, c has exactly zero area: repeated or collinear corners.
 * A 3D triangle has zero area exactly when all three coordinate-plane projections do, so three
 * exact orient2d signs decide it with no tolerance.
 */
export function isDegenerateTriangle(positions: Float64Array, a: number, b: number, c: number): boolean {
	if (a === b || b === c || a === c) return true;
	const a3 = 3 * a, b3 = 3 * b, c3 = 3 * c;
	const ax = positions[a3], ay = positions[a3 + 1], az = positions[a3 + 2];
	const bx = positions[b3], by = positions[b3 + 1], bz = positions[b3 + 2];
	const cx = positions[c3], cy = positions[c3 + 1], cz = positions[c3 + 2];
	return (
		orient2d(ax, ay, bx, by, cx, cy) === 0 &&
		orient2d(ay, az, by, bz, cy, cz) === 0 &&
		orient2d(az, ax, bz, bx, cz, cx) === 0
	);
}

/**
 * Which coordinate to drop to project a non-degenerate triangle onto a coordinate plane without
 * collapsing it: 0 → keep (y, z), 1 → keep (z, x), 2 → keep (x, y). Picks the projection with the
 * largest float area; its exact orient2d is then nonzero unless the triangle is degenerate.
 */
export function dropAxis(
	ax: number, ay: number, az: number,
	bx: number, by: number, bz: number,
	cx: number, cy: number, cz: number
): number {
	const ux = bx - ax, uy = by - ay, uz = bz - az;
	const vx = cx - ax, vy = cy - ay, vz = cz - az;
	const nx = Math.abs(uy * vz - uz * vy);
	const ny = Math.abs(uz * vx - ux * vz);
	const nz = Math.abs(ux * vy - uy * vx);
	let axis = nx >= ny ? (nx >= nz ? 0 : 2) : ny >= nz ? 1 : 2;
	// The float estimate can be 0 for tiny but nonzero areas: fall back to the exact signs.
	if ((axis === 0 ? nx : axis === 1 ? ny : nz) === 0) {
		if (orient2d(ay, az, by, bz, cy, cz) !== 0) axis = 0;
		else if (orient2d(az, ax, bz, bx, cz, cx) !== 0) axis = 1;
		else axis = 2;
	}
	return axis;
}
