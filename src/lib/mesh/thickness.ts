/**
 * Wall thickness and gap width per face, measured against a target CFD cell size, plus the two
 * other cell-size checks that need only the surface: longest edges and sharp feature edges.
 *
 * Thickness is the ray-casting form of the shape diameter function (Shapira, Shamir and
 * Cohen-Or 2008) reduced to its central ray: from each sample point of a face one ray along the
 * inward normal (−n, n from the CCW winding); the distance to the first accepted hit is the
 * wall there. Gap is the same ray along +n, so slots, and two shells close together, show up.
 * The single ray (no cone, no median) keeps the cost at two rays per sample; it reads exactly on
 * parallel walls, spheres and tubes, and overestimates nothing there. A cone would smooth noisy
 * scans at 10-30 × the cost; it waits until a mesh needs it.
 *
 * Rules (the same in both directions):
 *  - Samples: the centroid; a face whose longest edge exceeds the cell size also gets the three
 *    points halfway from the centroid to its corners. The face's value is the smallest over them.
 *  - Neighbourhood: hits on faces that share a vertex with the measured face are ignored, and so
 *    are hits closer than 1e-9 × the bounding-box diagonal.
 *  - Facing: a hit counts only where the ray meets the other wall roughly head-on: the angle
 *    between the ray and the hit face's normal (thickness: leaving the solid, so n·d > 0) or its
 *    reverse (gap: entering another solid, n·d < 0) is below 60°. Other hits are passed through.
 *    This drops the false narrow "gap" at every concave corner of 90° or more (the other leg is
 *    met side-on) and grazing hits on curved neighbours, while V-notches tighter than 60° count.
 *  - A face with zero area is not measured (Infinity).
 *  - A ray that meets two faces at one distance (through the edge they share) reports the lower
 *    face number, whatever order the traversal reached them in.
 *
 * Cost: O(F log F) to build the BVH (bvh.ts, Morton order), then per sample one traversal that
 * looks both ways along the normal for all of a face's samples (RayQuery.castSamples), the child nearer the origin first. Memory
 * about 200 bytes per face on top of the mesh (ray BVH ~135, per-face results of both ways ~64).
 * Figures: `npm run bench` (scripts/bench-thickness.ts).
 */
import { buildBvhSorted, f32Down, f32Up, morton3, mortonScale, sortByCode, type FlatBvh } from './bvh';
import { buildEdges, type EdgeTable } from './edges';
import type { MeshBuffers } from './types';
import { pointBounds } from './bounds';
import type { CellSizeChecks, WallGapFinding, WallGapRegion } from './report-types';

/** Hits whose face normal is more than this off the ray (or its reverse) are passed through. */
export const THICKNESS_FACING_MAX_DEG = 60;
/**
 * Default feature angle between the normals of two faces on an edge: 30°, the value commonly
 * used to split smoothing groups and to extract feature lines for snapping (an included angle of
 * 150°). Lower flags the facets of a coarse curved surface; higher misses chamfers.
 */
export const DEFAULT_FEATURE_ANGLE_DEG = 30;
/** Walls and gaps under 2 cells are flagged: common practice wants at least two cells across to resolve them. */
export const DEFAULT_THIN_CELLS = 2;

// Eight per leaf: with the normal prefilter a leaf test is cheap, and a shallower tree opens fewer boxes near the ray origin.
const LEAF_SIZE = 8;
const STACK_SIZE = 256;

/** Ray-query structure over a mesh's faces: a float32 BVH plus each slot's corners in float64. */
export interface RayBvh {
	bvh: FlatBvh<Float32Array>;
	/** Slot → face id. */
	faceOf: Uint32Array;
	/** 9 per slot: corners a, b, c (xyz each), in slot order so leaves read memory in sequence. */
	verts: Float64Array;
	/** 3 per slot: vertex ids, for the shared-vertex rule. */
	vids: Uint32Array;
	/** 3 per slot: unit face normal (float32; NaN for zero area), a cheap first test of the facing rule. */
	normals: Float32Array;
	/** Hits nearer than this are ignored (1e-9 × bounding-box diagonal). */
	tMin: number;
}

/** Builds the ray structure over every face (zero-area faces included; rays never hit them). */
export function buildRayBvh(mesh: MeshBuffers): RayBvh {
	const p = mesh.positions, idx = mesh.indices;
	const n = (idx.length / 3) | 0;
	const cen = new Float64Array(3 * n);
	for (let t = 0, t3 = 0; t < n; t++, t3 += 3) {
		const a3 = 3 * idx[t3], b3 = 3 * idx[t3 + 1], c3 = 3 * idx[t3 + 2];
		cen[t3] = p[a3] + p[b3] + p[c3]; cen[t3 + 1] = p[a3 + 1] + p[b3 + 1] + p[c3 + 1]; cen[t3 + 2] = p[a3 + 2] + p[b3 + 2] + p[c3 + 2];
	}
	const [lx, ly, lz, hx, hy, hz] = pointBounds(cen);
	const sx = mortonScale(lx, hx), sy = mortonScale(ly, hy), sz = mortonScale(lz, hz);
	const raw = new Uint32Array(n);
	for (let t = 0, t3 = 0; t < n; t++, t3 += 3) raw[t] = morton3(((cen[t3] - lx) * sx) | 0, ((cen[t3 + 1] - ly) * sy) | 0, ((cen[t3 + 2] - lz) * sz) | 0);
	const { codes, order } = sortByCode(raw);
	const boxes = new Float32Array(6 * n);
	const verts = new Float64Array(9 * n);
	const vids = new Uint32Array(3 * n);
	const normals = new Float32Array(3 * n);
	let bx0 = Infinity, by0 = Infinity, bz0 = Infinity, bx1 = -Infinity, by1 = -Infinity, bz1 = -Infinity;
	for (let s = 0; s < n; s++) {
		const t3 = 3 * order[s];
		const a = idx[t3], b = idx[t3 + 1], c = idx[t3 + 2];
		vids[3 * s] = a; vids[3 * s + 1] = b; vids[3 * s + 2] = c;
		const a3 = 3 * a, b3 = 3 * b, c3 = 3 * c, o9 = 9 * s;
		const ax = p[a3], ay = p[a3 + 1], az = p[a3 + 2], bx = p[b3], by = p[b3 + 1], bz = p[b3 + 2], cx = p[c3], cy = p[c3 + 1], cz = p[c3 + 2];
		verts[o9] = ax; verts[o9 + 1] = ay; verts[o9 + 2] = az;
		verts[o9 + 3] = bx; verts[o9 + 4] = by; verts[o9 + 5] = bz;
		verts[o9 + 6] = cx; verts[o9 + 7] = cy; verts[o9 + 8] = cz;
		{
			const e1x = bx - ax, e1y = by - ay, e1z = bz - az, e2x = cx - ax, e2y = cy - ay, e2z = cz - az;
			const nx = e1y * e2z - e1z * e2y, ny = e1z * e2x - e1x * e2z, nz = e1x * e2y - e1y * e2x;
			const l = Math.sqrt(nx * nx + ny * ny + nz * nz);
			normals[3 * s] = nx / l; normals[3 * s + 1] = ny / l; normals[3 * s + 2] = nz / l;
		}
		const mnx = Math.min(ax, bx, cx), mny = Math.min(ay, by, cy), mnz = Math.min(az, bz, cz);
		const mxx = Math.max(ax, bx, cx), mxy = Math.max(ay, by, cy), mxz = Math.max(az, bz, cz);
		const o6 = 6 * s;
		boxes[o6] = f32Down(mnx); boxes[o6 + 1] = f32Down(mny); boxes[o6 + 2] = f32Down(mnz);
		boxes[o6 + 3] = f32Up(mxx); boxes[o6 + 4] = f32Up(mxy); boxes[o6 + 5] = f32Up(mxz);
		if (mnx < bx0) bx0 = mnx;
		if (mny < by0) by0 = mny;
		if (mnz < bz0) bz0 = mnz;
		if (mxx > bx1) bx1 = mxx;
		if (mxy > by1) by1 = mxy;
		if (mxz > bz1) bz1 = mxz;
	}
	const bvh = buildBvhSorted(codes, boxes, LEAF_SIZE);
	const diag = n > 0 ? Math.hypot(bx1 - bx0, by1 - by0, bz1 - bz0) : 0;
	return { bvh, faceOf: order, verts, vids, normals, tMin: 1e-9 * diag };
}

/**
 * Closest accepted hit of one ray; a reusable query so the traversal stack and the result live in
 * scratch owned by the caller, not in module state.
 */
export class RayQuery {
	/** Face hit by the last cast (−1 for none). */
	hitFace = -1;
	private readonly stack = new Int32Array(STACK_SIZE);
	private readonly stackT = new Float64Array(STACK_SIZE);
	private readonly minCos = Math.cos((THICKNESS_FACING_MAX_DEG * Math.PI) / 180);
	constructor(readonly rb: RayBvh) {}

	/**
	 * Distance along the unit direction d from o to the nearest face that is not one sharing a
	 * vertex with (skipA, skipB, skipC) (pass 0xffffffff to skip none), is at least tMin away, and
	 * faces the ray as `sense` asks: +1 leaves a solid (n·d ≥ cos 60°), −1 enters one (n·d ≤ −cos 60°).
	 * Infinity when none lies within tMax.
	 */
	cast(ox: number, oy: number, oz: number, dx: number, dy: number, dz: number, tMax: number, skipA: number, skipB: number, skipC: number, sense: 1 | -1): number {
		const { bvh, verts, vids, faceOf, tMin } = this.rb;
		const { firstChild, bounds, start, count } = bvh;
		this.hitFace = -1;
		if (bvh.nodeCount === 0 || count[0] === 0) return Infinity;
		// A zero component would give 0 × ∞ = NaN on a slab through the origin; a huge finite inverse does not.
		const ix = Math.abs(dx) > 1e-300 ? 1 / dx : dx < 0 || Object.is(dx, -0) ? -1e300 : 1e300;
		const iy = Math.abs(dy) > 1e-300 ? 1 / dy : dy < 0 || Object.is(dy, -0) ? -1e300 : 1e300;
		const iz = Math.abs(dz) > 1e-300 ? 1 / dz : dz < 0 || Object.is(dz, -0) ? -1e300 : 1e300;
		const minCos = this.minCos;
		const stack = this.stack;
		const stackT = this.stackT;
		let best = tMax, bestSlot = -1;
		let sp = 0;
		{
			// Root box: the only one tested when popped; children are tested when pushed and carry their entry distance.
			let t0 = (bounds[0] - ox) * ix, t1 = (bounds[3] - ox) * ix;
			let lo = t0 < t1 ? t0 : t1, hi = t0 < t1 ? t1 : t0;
			t0 = (bounds[1] - oy) * iy; t1 = (bounds[4] - oy) * iy;
			lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
			t0 = (bounds[2] - oz) * iz; t1 = (bounds[5] - oz) * iz;
			lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
			if (hi < lo || hi < 0 || lo > best) return Infinity;
			stack[sp] = 0;
			stackT[sp++] = lo;
		}
		while (sp > 0) {
			--sp;
			// The box may have been pushed before `best` shrank.
			if (stackT[sp] > best) continue;
			const node = stack[sp];
			const fc = firstChild[node];
			if (fc >= 0) {
				// Entry distances of both children; push the farther first so the nearer is opened next.
				let ea = Infinity, eb = Infinity;
				let o = 6 * fc;
				{
					let t0 = (bounds[o] - ox) * ix, t1 = (bounds[o + 3] - ox) * ix;
					let lo = t0 < t1 ? t0 : t1, hi = t0 < t1 ? t1 : t0;
					t0 = (bounds[o + 1] - oy) * iy; t1 = (bounds[o + 4] - oy) * iy;
					lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
					t0 = (bounds[o + 2] - oz) * iz; t1 = (bounds[o + 5] - oz) * iz;
					lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
					if (hi >= lo && hi >= 0 && lo <= best) ea = lo;
				}
				o += 6;
				{
					let t0 = (bounds[o] - ox) * ix, t1 = (bounds[o + 3] - ox) * ix;
					let lo = t0 < t1 ? t0 : t1, hi = t0 < t1 ? t1 : t0;
					t0 = (bounds[o + 1] - oy) * iy; t1 = (bounds[o + 4] - oy) * iy;
					lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
					t0 = (bounds[o + 2] - oz) * iz; t1 = (bounds[o + 5] - oz) * iz;
					lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
					if (hi >= lo && hi >= 0 && lo <= best) eb = lo;
				}
				if (sp + 2 > STACK_SIZE) throw new Error('ray traversal stack overflow');
				if (ea <= eb) {
					if (eb !== Infinity) { stack[sp] = fc + 1; stackT[sp++] = eb; }
					if (ea !== Infinity) { stack[sp] = fc; stackT[sp++] = ea; }
				} else {
					if (ea !== Infinity) { stack[sp] = fc; stackT[sp++] = ea; }
					stack[sp] = fc + 1; stackT[sp++] = eb;
				}
				continue;
			}
			for (let s = start[node], end = s + count[node]; s < end; s++) {
				const o9 = 9 * s;
				const ax = verts[o9], ay = verts[o9 + 1], az = verts[o9 + 2];
				const e1x = verts[o9 + 3] - ax, e1y = verts[o9 + 4] - ay, e1z = verts[o9 + 5] - az;
				const e2x = verts[o9 + 6] - ax, e2y = verts[o9 + 7] - ay, e2z = verts[o9 + 8] - az;
				// Möller-Trumbore (1997), two-sided; det = −d·(e1 × e2).
				const px = dy * e2z - dz * e2y, py = dz * e2x - dx * e2z, pz = dx * e2y - dy * e2x;
				const det = e1x * px + e1y * py + e1z * pz;
				if (det === 0) continue;
				const inv = 1 / det;
				const qx = ox - ax, qy = oy - ay, qz = oz - az;
				const u = (qx * px + qy * py + qz * pz) * inv;
				if (u < 0 || u > 1) continue;
				const rx = qy * e1z - qz * e1y, ry = qz * e1x - qx * e1z, rz = qx * e1y - qy * e1x;
				const v = (dx * rx + dy * ry + dz * rz) * inv;
				if (v < 0 || u + v > 1) continue;
				const t = (e2x * rx + e2y * ry + e2z * rz) * inv;
				if (t < tMin || t > best || (t === best && (bestSlot < 0 || faceOf[s] > faceOf[bestSlot]))) continue;
				const s3 = 3 * s;
				const va = vids[s3], vb = vids[s3 + 1], vc = vids[s3 + 2];
				if (va === skipA || va === skipB || va === skipC || vb === skipA || vb === skipB || vb === skipC || vc === skipA || vc === skipB || vc === skipC) continue;
				const nx = e1y * e2z - e1z * e2y, ny = e1z * e2x - e1x * e2z, nz = e1x * e2y - e1y * e2x;
				const nLen = Math.sqrt(nx * nx + ny * ny + nz * nz);
				// n·d = −det; the facing rule compares the cosine with cos 60°.
				if (sense * -det < minCos * nLen) continue;
				best = t;
				bestSlot = s;
			}
		}
		if (bestSlot < 0) return Infinity;
		this.hitFace = faceOf[bestSlot];
		return best;
	}

	/** Results of the last castLine (one line; castSamples for several): nearest accepted hit ahead (+d) and behind (−d), distance and face. */
	lineAheadT = Infinity;
	lineAheadFace = -1;
	lineBehindT = Infinity;
	lineBehindFace = -1;

	/**
	 * Both ways along the line o + t·d in one traversal: the nearest hit ahead that enters a solid
	 * (a gap when d is the outward normal) and the nearest hit behind that leaves one (the wall),
	 * each by the rules of cast(); both ask n·d ≤ −cos 60°. The boxes near o, which every ray from
	 * a surface point opens, are visited once instead of twice. Results in aheadT/aheadFace,
	 * behindT/behindFace (Infinity, −1 for none within tMaxAhead / tMaxBehind). A face's single
	 * sample takes this one: the same traversal as castSamples for one line, without its loop over lines.
	 */
	castLine(ox: number, oy: number, oz: number, dx: number, dy: number, dz: number, tMaxAhead: number, tMaxBehind: number, skipA: number, skipB: number, skipC: number): void {
		// Through a Float64Array, so the traversal always sees doubles: an argument that is
		// sometimes a small integer (an axis-aligned normal's 0) made the JIT throw its code away
		// and rebuild it, which measured up to twice the whole run on a cold process.
		const r = this.oneLine;
		r[0] = ox; r[1] = oy; r[2] = oz; r[3] = dx; r[4] = dy; r[5] = dz; r[6] = tMaxAhead; r[7] = tMaxBehind;
		this.castLineStored(skipA, skipB, skipC);
	}

	private readonly oneLine = new Float64Array(8);

	private castLineStored(skipA: number, skipB: number, skipC: number): void {
		const r = this.oneLine;
		const ox = r[0], oy = r[1], oz = r[2], dx = r[3], dy = r[4], dz = r[5], tMaxAhead = r[6], tMaxBehind = r[7];
		const { bvh, verts, vids, normals, faceOf, tMin } = this.rb;
		const { firstChild, bounds, start, count } = bvh;
		// Float32 normals are off by ~1e-7; the margin keeps the prefilter from rejecting a face the exact test accepts.
		const preCos = -this.minCos + 1e-4;
		this.lineAheadT = this.lineBehindT = Infinity;
		this.lineAheadFace = this.lineBehindFace = -1;
		if (bvh.nodeCount === 0 || count[0] === 0) return;
		const ix = Math.abs(dx) > 1e-300 ? 1 / dx : dx < 0 || Object.is(dx, -0) ? -1e300 : 1e300;
		const iy = Math.abs(dy) > 1e-300 ? 1 / dy : dy < 0 || Object.is(dy, -0) ? -1e300 : 1e300;
		const iz = Math.abs(dz) > 1e-300 ? 1 / dz : dz < 0 || Object.is(dz, -0) ? -1e300 : 1e300;
		const minCos = this.minCos;
		const stack = this.stack, sLo = this.stackT, sHi = this.stackHi;
		// Signed search window (−behind, ahead); a box matters while its line interval overlaps it.
		let ahead = tMaxAhead, behind = tMaxBehind, aheadSlot = -1, behindSlot = -1;
		let sp = 0;
		{
			let t0 = (bounds[0] - ox) * ix, t1 = (bounds[3] - ox) * ix;
			let lo = t0 < t1 ? t0 : t1, hi = t0 < t1 ? t1 : t0;
			t0 = (bounds[1] - oy) * iy; t1 = (bounds[4] - oy) * iy;
			lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
			t0 = (bounds[2] - oz) * iz; t1 = (bounds[5] - oz) * iz;
			lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
			if (hi < lo || lo > ahead || hi < -behind) return;
			stack[sp] = 0; sLo[sp] = lo; sHi[sp++] = hi;
		}
		while (sp > 0) {
			--sp;
			if (sLo[sp] > ahead || sHi[sp] < -behind) continue;
			const node = stack[sp];
			const fc = firstChild[node];
			if (fc >= 0) {
				// Push the child farther from o first (distance from 0 to its interval).
				let loA = 0, hiA = 0, loB = 0, hiB = 0, okA = false, okB = false;
				let o = 6 * fc;
				{
					let t0 = (bounds[o] - ox) * ix, t1 = (bounds[o + 3] - ox) * ix;
					let lo = t0 < t1 ? t0 : t1, hi = t0 < t1 ? t1 : t0;
					t0 = (bounds[o + 1] - oy) * iy; t1 = (bounds[o + 4] - oy) * iy;
					lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
					t0 = (bounds[o + 2] - oz) * iz; t1 = (bounds[o + 5] - oz) * iz;
					lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
					if (hi >= lo && lo <= ahead && hi >= -behind) { okA = true; loA = lo; hiA = hi; }
				}
				o += 6;
				{
					let t0 = (bounds[o] - ox) * ix, t1 = (bounds[o + 3] - ox) * ix;
					let lo = t0 < t1 ? t0 : t1, hi = t0 < t1 ? t1 : t0;
					t0 = (bounds[o + 1] - oy) * iy; t1 = (bounds[o + 4] - oy) * iy;
					lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
					t0 = (bounds[o + 2] - oz) * iz; t1 = (bounds[o + 5] - oz) * iz;
					lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
					if (hi >= lo && lo <= ahead && hi >= -behind) { okB = true; loB = lo; hiB = hi; }
				}
				if (sp + 2 > STACK_SIZE) throw new Error('ray traversal stack overflow');
				const dA = loA > 0 ? loA : hiA < 0 ? -hiA : 0, dB = loB > 0 ? loB : hiB < 0 ? -hiB : 0;
				if (okA && okB) {
					if (dA <= dB) {
						stack[sp] = fc + 1; sLo[sp] = loB; sHi[sp++] = hiB;
						stack[sp] = fc; sLo[sp] = loA; sHi[sp++] = hiA;
					} else {
						stack[sp] = fc; sLo[sp] = loA; sHi[sp++] = hiA;
						stack[sp] = fc + 1; sLo[sp] = loB; sHi[sp++] = hiB;
					}
				} else if (okA) {
					stack[sp] = fc; sLo[sp] = loA; sHi[sp++] = hiA;
				} else if (okB) {
					stack[sp] = fc + 1; sLo[sp] = loB; sHi[sp++] = hiB;
				}
				continue;
			}
			for (let s = start[node], end = s + count[node]; s < end; s++) {
				// Faces turned the wrong way (the measured face's own neighbours, mostly) leave here.
				const s3n = 3 * s;
				if (normals[s3n] * dx + normals[s3n + 1] * dy + normals[s3n + 2] * dz > preCos) continue;
				const o9 = 9 * s;
				const ax = verts[o9], ay = verts[o9 + 1], az = verts[o9 + 2];
				const e1x = verts[o9 + 3] - ax, e1y = verts[o9 + 4] - ay, e1z = verts[o9 + 5] - az;
				const e2x = verts[o9 + 6] - ax, e2y = verts[o9 + 7] - ay, e2z = verts[o9 + 8] - az;
				const px = dy * e2z - dz * e2y, py = dz * e2x - dx * e2z, pz = dx * e2y - dy * e2x;
				const det = e1x * px + e1y * py + e1z * pz;
				// n·d = −det must be ≤ −cos 60° · |n| on both sides: a cheap sign test first.
				if (det <= 0) continue;
				const inv = 1 / det;
				const qx = ox - ax, qy = oy - ay, qz = oz - az;
				const u = (qx * px + qy * py + qz * pz) * inv;
				if (u < 0 || u > 1) continue;
				const rx = qy * e1z - qz * e1y, ry = qz * e1x - qx * e1z, rz = qx * e1y - qy * e1x;
				const v = (dx * rx + dy * ry + dz * rz) * inv;
				if (v < 0 || u + v > 1) continue;
				const t = (e2x * rx + e2y * ry + e2z * rz) * inv;
				const at = t < 0 ? -t : t;
				// On an exact tie between two faces, the lower face number, whatever the order they were reached in.
				if (at < tMin || (t > 0 ? t > ahead || (t === ahead && (aheadSlot < 0 || faceOf[s] > faceOf[aheadSlot])) : at > behind || (at === behind && (behindSlot < 0 || faceOf[s] > faceOf[behindSlot])))) continue;
				const s3 = 3 * s;
				const va = vids[s3], vb = vids[s3 + 1], vc = vids[s3 + 2];
				if (va === skipA || va === skipB || va === skipC || vb === skipA || vb === skipB || vb === skipC || vc === skipA || vc === skipB || vc === skipC) continue;
				const nx = e1y * e2z - e1z * e2y, ny = e1z * e2x - e1x * e2z, nz = e1x * e2y - e1y * e2x;
				if (det < minCos * Math.sqrt(nx * nx + ny * ny + nz * nz)) continue;
				if (t > 0) {
					ahead = t;
					aheadSlot = s;
				} else {
					behind = at;
					behindSlot = s;
				}
			}
		}
		if (aheadSlot >= 0) {
			this.lineAheadT = ahead;
			this.lineAheadFace = faceOf[aheadSlot];
		}
		if (behindSlot >= 0) {
			this.lineBehindT = behind;
			this.lineBehindFace = faceOf[behindSlot];
		}
	}

	/**
	 * Results of the last castSamples, per line k (0: the first origin): nearest accepted hit ahead
	 * (+d) and behind (−d), distance and face (Infinity, −1 for none within the window).
	 */
	readonly aheadT = new Float64Array(4);
	readonly aheadFace = new Int32Array(4);
	readonly behindT = new Float64Array(4);
	readonly behindFace = new Int32Array(4);
	/**
	 * Input of castSamples, written by the caller: origins (x, y, z per line, up to 4), then the
	 * unit direction d and the windows ahead and behind. Through a Float64Array, so the traversal
	 * always sees doubles: an argument that is sometimes a small integer (an axis-aligned normal's
	 * 0) made the JIT throw its code away and rebuild it, which measured up to twice the whole run
	 * on a cold process.
	 */
	readonly line = new Float64Array(17);
	private readonly stackHi = new Float64Array(STACK_SIZE);
	private readonly aheadSlot = new Int32Array(4);
	private readonly behindSlot = new Int32Array(4);

	/**
	 * Both ways along `lines` parallel lines o_k + t·d (1 to 4, origins and d in `line`) in one
	 * traversal: for each, the nearest hit ahead that enters a solid (a gap when d is the outward
	 * normal) and the nearest hit behind that leaves one (the wall), each by the rules of cast();
	 * both ask n·d ≤ −cos 60°. A face's samples share the boxes they open: the traversal follows
	 * the first line with every box grown by the other origins' offset from it on each axis (a
	 * point of line k at t lies that offset from the first line's point at t, so a box line k
	 * crosses at t, grown so, is crossed by the first line at t), and each face reached is tested
	 * against every line. Every line meets all the faces its own traversal would, so each line's
	 * nearest hit is the one a traversal of its own finds (on an exact tie between two faces at one
	 * distance, the lower face number). Results in aheadT/aheadFace, behindT/behindFace.
	 */
	castSamples(lines: number, skipA: number, skipB: number, skipC: number): void {
		const r = this.line;
		const o3 = 3 * lines;
		const dx = r[12], dy = r[13], dz = r[14], tMaxAhead = r[15], tMaxBehind = r[16];
		const ox = r[0], oy = r[1], oz = r[2];
		const { bvh, verts, vids, normals, faceOf, tMin } = this.rb;
		const { firstChild, bounds, start, count } = bvh;
		// Float32 normals are off by ~1e-7; the margin keeps the prefilter from rejecting a face the exact test accepts.
		const preCos = -this.minCos + 1e-4;
		const aheadT = this.aheadT, behindT = this.behindT, aheadSlot = this.aheadSlot, behindSlot = this.behindSlot;
		for (let k = 0; k < 4; k++) {
			aheadT[k] = tMaxAhead; behindT[k] = tMaxBehind; aheadSlot[k] = -1; behindSlot[k] = -1;
		}
		if (bvh.nodeCount === 0 || count[0] === 0) {
			this.finishSamples();
			return;
		}
		// Each box grows by the largest offset of an origin from the first on each axis, plus tMin
		// for rounding (0 + tMin for one line).
		let gx = 0, gy = 0, gz = 0;
		for (let k = 3; k < o3; k += 3) {
			gx = Math.max(gx, Math.abs(r[k] - ox)); gy = Math.max(gy, Math.abs(r[k + 1] - oy)); gz = Math.max(gz, Math.abs(r[k + 2] - oz));
		}
		gx += tMin; gy += tMin; gz += tMin;
		const ix = Math.abs(dx) > 1e-300 ? 1 / dx : dx < 0 || Object.is(dx, -0) ? -1e300 : 1e300;
		const iy = Math.abs(dy) > 1e-300 ? 1 / dy : dy < 0 || Object.is(dy, -0) ? -1e300 : 1e300;
		const iz = Math.abs(dz) > 1e-300 ? 1 / dz : dz < 0 || Object.is(dz, -0) ? -1e300 : 1e300;
		const minCos = this.minCos;
		const stack = this.stack, sLo = this.stackT, sHi = this.stackHi;
		// Signed search window (−behind, ahead), the widest over the lines; a box matters while its
		// interval along the first line overlaps it.
		let ahead = tMaxAhead, behind = tMaxBehind;
		let sp = 0;
		{
			let t0 = (bounds[0] - gx - ox) * ix, t1 = (bounds[3] + gx - ox) * ix;
			let lo = t0 < t1 ? t0 : t1, hi = t0 < t1 ? t1 : t0;
			t0 = (bounds[1] - gy - oy) * iy; t1 = (bounds[4] + gy - oy) * iy;
			lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
			t0 = (bounds[2] - gz - oz) * iz; t1 = (bounds[5] + gz - oz) * iz;
			lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
			if (hi < lo || lo > ahead || hi < -behind) {
				this.finishSamples();
				return;
			}
			stack[sp] = 0; sLo[sp] = lo; sHi[sp++] = hi;
		}
		while (sp > 0) {
			--sp;
			if (sLo[sp] > ahead || sHi[sp] < -behind) continue;
			const node = stack[sp];
			const fc = firstChild[node];
			if (fc >= 0) {
				// Push the child farther from o first (distance from 0 to its interval).
				let loA = 0, hiA = 0, loB = 0, hiB = 0, okA = false, okB = false;
				let o = 6 * fc;
				{
					let t0 = (bounds[o] - gx - ox) * ix, t1 = (bounds[o + 3] + gx - ox) * ix;
					let lo = t0 < t1 ? t0 : t1, hi = t0 < t1 ? t1 : t0;
					t0 = (bounds[o + 1] - gy - oy) * iy; t1 = (bounds[o + 4] + gy - oy) * iy;
					lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
					t0 = (bounds[o + 2] - gz - oz) * iz; t1 = (bounds[o + 5] + gz - oz) * iz;
					lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
					if (hi >= lo && lo <= ahead && hi >= -behind) { okA = true; loA = lo; hiA = hi; }
				}
				o += 6;
				{
					let t0 = (bounds[o] - gx - ox) * ix, t1 = (bounds[o + 3] + gx - ox) * ix;
					let lo = t0 < t1 ? t0 : t1, hi = t0 < t1 ? t1 : t0;
					t0 = (bounds[o + 1] - gy - oy) * iy; t1 = (bounds[o + 4] + gy - oy) * iy;
					lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
					t0 = (bounds[o + 2] - gz - oz) * iz; t1 = (bounds[o + 5] + gz - oz) * iz;
					lo = Math.max(lo, t0 < t1 ? t0 : t1); hi = Math.min(hi, t0 < t1 ? t1 : t0);
					if (hi >= lo && lo <= ahead && hi >= -behind) { okB = true; loB = lo; hiB = hi; }
				}
				if (sp + 2 > STACK_SIZE) throw new Error('ray traversal stack overflow');
				const dA = loA > 0 ? loA : hiA < 0 ? -hiA : 0, dB = loB > 0 ? loB : hiB < 0 ? -hiB : 0;
				if (okA && okB) {
					if (dA <= dB) {
						stack[sp] = fc + 1; sLo[sp] = loB; sHi[sp++] = hiB;
						stack[sp] = fc; sLo[sp] = loA; sHi[sp++] = hiA;
					} else {
						stack[sp] = fc; sLo[sp] = loA; sHi[sp++] = hiA;
						stack[sp] = fc + 1; sLo[sp] = loB; sHi[sp++] = hiB;
					}
				} else if (okA) {
					stack[sp] = fc; sLo[sp] = loA; sHi[sp++] = hiA;
				} else if (okB) {
					stack[sp] = fc + 1; sLo[sp] = loB; sHi[sp++] = hiB;
				}
				continue;
			}
			for (let s = start[node], end = s + count[node]; s < end; s++) {
				// Faces turned the wrong way (the measured face's own neighbours, mostly) leave here.
				const s3 = 3 * s;
				if (normals[s3] * dx + normals[s3 + 1] * dy + normals[s3 + 2] * dz > preCos) continue;
				const va = vids[s3], vb = vids[s3 + 1], vc = vids[s3 + 2];
				if (va === skipA || va === skipB || va === skipC || vb === skipA || vb === skipB || vb === skipC || vc === skipA || vc === skipB || vc === skipC) continue;
				const o9 = 9 * s;
				const ax = verts[o9], ay = verts[o9 + 1], az = verts[o9 + 2];
				const e1x = verts[o9 + 3] - ax, e1y = verts[o9 + 4] - ay, e1z = verts[o9 + 5] - az;
				const e2x = verts[o9 + 6] - ax, e2y = verts[o9 + 7] - ay, e2z = verts[o9 + 8] - az;
				// Möller-Trumbore (1997); det = −d·(e1 × e2), the same for every line.
				const px = dy * e2z - dz * e2y, py = dz * e2x - dx * e2z, pz = dx * e2y - dy * e2x;
				const det = e1x * px + e1y * py + e1z * pz;
				// n·d = −det must be ≤ −cos 60° · |n| on both sides: a cheap sign test first.
				if (det <= 0) continue;
				const nx = e1y * e2z - e1z * e2y, ny = e1z * e2x - e1x * e2z, nz = e1x * e2y - e1y * e2x;
				if (det < minCos * Math.sqrt(nx * nx + ny * ny + nz * nz)) continue;
				const inv = 1 / det;
				let changed = false;
				for (let k = 0, k3 = 0; k3 < o3; k++, k3 += 3) {
					const qx = r[k3] - ax, qy = r[k3 + 1] - ay, qz = r[k3 + 2] - az;
					const u = (qx * px + qy * py + qz * pz) * inv;
					if (u < 0 || u > 1) continue;
					const rx = qy * e1z - qz * e1y, ry = qz * e1x - qx * e1z, rz = qx * e1y - qy * e1x;
					const v = (dx * rx + dy * ry + dz * rz) * inv;
					if (v < 0 || u + v > 1) continue;
					const t = (e2x * rx + e2y * ry + e2z * rz) * inv;
					const at = t < 0 ? -t : t;
					if (at < tMin) continue;
					if (t > 0 ? t > aheadT[k] || (t === aheadT[k] && (aheadSlot[k] < 0 || faceOf[s] > faceOf[aheadSlot[k]])) : at > behindT[k] || (at === behindT[k] && (behindSlot[k] < 0 || faceOf[s] > faceOf[behindSlot[k]]))) continue;
					if (t > 0) {
						aheadT[k] = t;
						aheadSlot[k] = s;
					} else {
						behindT[k] = at;
						behindSlot[k] = s;
					}
					changed = true;
				}
				if (changed) {
					ahead = aheadT[0]; behind = behindT[0];
					for (let k = 1; k < lines; k++) {
						if (aheadT[k] > ahead) ahead = aheadT[k];
						if (behindT[k] > behind) behind = behindT[k];
					}
				}
			}
		}
		this.finishSamples();
	}

	/** Slots to faces; Infinity for a line with no hit inside its window. */
	private finishSamples(): void {
		for (let k = 0; k < 4; k++) {
			const a = this.aheadSlot[k], b = this.behindSlot[k];
			if (a < 0) this.aheadT[k] = Infinity;
			this.aheadFace[k] = a < 0 ? -1 : this.rb.faceOf[a];
			if (b < 0) this.behindT[k] = Infinity;
			this.behindFace[k] = b < 0 ? -1 : this.rb.faceOf[b];
		}
	}
}

export interface FaceDistanceOptions {
	/** Target cell size (model units): faces with an edge longer than this get four samples, not one. */
	cellSize: number;
	/** Rays stop here; a face with nothing nearer reads Infinity. Default Infinity (unbounded). */
	maxDistance?: number;
	/** Reuse a structure built already (e.g. for both calls on one mesh). */
	rayBvh?: RayBvh;
}

/** Per-face distances of one direction. */
export interface FaceDistances {
	/** Per face: the smallest distance over its samples; Infinity where no ray hit (or beyond maxDistance). */
	value: Float32Array;
	/** Per face: the face that ray hit, −1 for none. */
	hitFace: Int32Array;
	/** Per face, 3 each: the sample point the smallest value was measured from (NaN where no hit). */
	from: Float64Array;
	/** Rays cast (samples × 1). */
	rays: number;
	ms: number;
}

/**
 * Wall thickness ('inward', along −n) or gap width ('outward', along +n) of every face, by the
 * rules in the file comment.
 */
export function faceDistances(mesh: MeshBuffers, direction: 'inward' | 'outward', opts: FaceDistanceOptions): FaceDistances {
	const t0 = performance.now();
	const n = (mesh.indices.length / 3) | 0;
	const rb = opts.rayBvh ?? buildRayBvh(mesh);
	const q = new RayQuery(rb);
	const tMax = opts.maxDistance ?? Infinity;
	const cell2 = opts.cellSize * opts.cellSize;
	const sign = direction === 'inward' ? -1 : 1;
	const sense: 1 | -1 = direction === 'inward' ? 1 : -1;
	const value = new Float32Array(n).fill(Infinity);
	const hitFace = new Int32Array(n).fill(-1);
	const from = new Float64Array(3 * n).fill(NaN);
	let rays = 0;
	const { verts, vids, faceOf } = rb;
	// Faces in the BVH's Morton order: neighbouring rays open the same nodes, so memory stays warm.
	for (let s = 0; s < n; s++) {
		const t = faceOf[s], t3 = 3 * t, s3 = 3 * s, o9 = 9 * s;
		const a = vids[s3], b = vids[s3 + 1], c = vids[s3 + 2];
		const ax = verts[o9], ay = verts[o9 + 1], az = verts[o9 + 2], bx = verts[o9 + 3], by = verts[o9 + 4], bz = verts[o9 + 5], cx = verts[o9 + 6], cy = verts[o9 + 7], cz = verts[o9 + 8];
		const e1x = bx - ax, e1y = by - ay, e1z = bz - az, e2x = cx - ax, e2y = cy - ay, e2z = cz - az;
		let nx = e1y * e2z - e1z * e2y, ny = e1z * e2x - e1x * e2z, nz = e1x * e2y - e1y * e2x;
		const len = Math.sqrt(nx * nx + ny * ny + nz * nz);
		if (!(len > 0)) continue;
		nx = (sign * nx) / len; ny = (sign * ny) / len; nz = (sign * nz) / len;
		const gx = (ax + bx + cx) / 3, gy = (ay + by + cy) / 3, gz = (az + bz + cz) / 3;
		let bestT = q.cast(gx, gy, gz, nx, ny, nz, tMax, a, b, c, sense);
		let bestHit = q.hitFace, fx = gx, fy = gy, fz = gz;
		rays++;
		const e3x = cx - bx, e3y = cy - by, e3z = cz - bz;
		const longest2 = Math.max(e1x * e1x + e1y * e1y + e1z * e1z, e2x * e2x + e2y * e2y + e2z * e2z, e3x * e3x + e3y * e3y + e3z * e3z);
		if (longest2 > cell2) {
			for (let k = 0; k < 3; k++) {
				const vx = k === 0 ? ax : k === 1 ? bx : cx, vy = k === 0 ? ay : k === 1 ? by : cy, vz = k === 0 ? az : k === 1 ? bz : cz;
				const sx = (gx + vx) / 2, sy = (gy + vy) / 2, sz = (gz + vz) / 2;
				const d = q.cast(sx, sy, sz, nx, ny, nz, Math.min(tMax, bestT), a, b, c, sense);
				rays++;
				if (d < bestT) {
					bestT = d; bestHit = q.hitFace; fx = sx; fy = sy; fz = sz;
				}
			}
		}
		if (bestHit >= 0) {
			value[t] = bestT;
			hitFace[t] = bestHit;
			from[t3] = fx; from[t3 + 1] = fy; from[t3 + 2] = fz;
		}
	}
	return { value, hitFace, from, rays, ms: performance.now() - t0 };
}

function emptyDistances(n: number): FaceDistances {
	return { value: new Float32Array(n).fill(Infinity), hitFace: new Int32Array(n).fill(-1), from: new Float64Array(3 * n).fill(NaN), rays: 0, ms: 0 };
}

/**
 * Wall thickness and gap of every face in one pass: one line query per sample along the normal
 * (RayQuery.castSamples), the same values as faceDistances 'inward' and 'outward'. `rays` counts
 * line queries (each serves both); `ms` of each result is the shared time.
 */
export function faceDistancesBoth(mesh: MeshBuffers, opts: FaceDistanceOptions): { thickness: FaceDistances; gap: FaceDistances } {
	const t0 = performance.now();
	const n = (mesh.indices.length / 3) | 0;
	const rb = opts.rayBvh ?? buildRayBvh(mesh);
	const th = emptyDistances(n), gp = emptyDistances(n);
	// In chunks: a short function called often is compiled whole by the JIT, where one long loop
	// runs in an on-stack-replaced version that measured up to twice as slow on a cold process.
	let rays = 0;
	for (let s0 = 0; s0 < n; s0 += 4096) rays += distancesBothRange(rb, s0, Math.min(n, s0 + 4096), opts.cellSize, opts.maxDistance ?? Infinity, th, gp);
	th.rays = gp.rays = rays;
	th.ms = gp.ms = performance.now() - t0;
	return { thickness: th, gap: gp };
}

/** Per-face output arrays of one direction, e.g. views of shared memory filled by several threads. */
export type DistanceArrays = Pick<FaceDistances, 'value' | 'hitFace' | 'from'>;

/**
 * The work of faceDistancesBoth for the faces in BVH slots [s0, s1): writes their entries of
 * th (wall) and gp (gap), which must start as Infinity / −1 / NaN. Slots are disjoint per face,
 * so threads taking disjoint slot ranges write disjoint entries. Returns the line queries cast.
 */
export function distancesBothRange(rb: RayBvh, s0: number, s1: number, cellSize: number, tMax: number, th: DistanceArrays, gp: DistanceArrays): number {
	const q = new RayQuery(rb);
	const line = q.line;
	const cell2 = cellSize * cellSize;
	let rays = 0;
	const { verts, vids, faceOf } = rb;
	for (let s = s0; s < s1; s++) {
		const t = faceOf[s], t3 = 3 * t, s3 = 3 * s, o9 = 9 * s;
		const a = vids[s3], b = vids[s3 + 1], c = vids[s3 + 2];
		const ax = verts[o9], ay = verts[o9 + 1], az = verts[o9 + 2], bx = verts[o9 + 3], by = verts[o9 + 4], bz = verts[o9 + 5], cx = verts[o9 + 6], cy = verts[o9 + 7], cz = verts[o9 + 8];
		const e1x = bx - ax, e1y = by - ay, e1z = bz - az, e2x = cx - ax, e2y = cy - ay, e2z = cz - az;
		let nx = e1y * e2z - e1z * e2y, ny = e1z * e2x - e1x * e2z, nz = e1x * e2y - e1y * e2x;
		const len = Math.sqrt(nx * nx + ny * ny + nz * nz);
		if (!(len > 0)) continue;
		nx /= len; ny /= len; nz /= len;
		const gx = (ax + bx + cx) / 3, gy = (ay + by + cy) / 3, gz = (az + bz + cz) / 3;
		const e3x = cx - bx, e3y = cy - by, e3z = cz - bz;
		const longest2 = Math.max(e1x * e1x + e1y * e1y + e1z * e1z, e2x * e2x + e2y * e2y + e2z * e2z, e3x * e3x + e3y * e3y + e3z * e3z);
		// The centroid, and for a face longer than a cell the points halfway to its corners, in one traversal.
		let gT: number, gF: number, gX = gx, gY = gy, gZ = gz;
		let wT: number, wF: number, wX = gx, wY = gy, wZ = gz;
		if (longest2 > cell2) {
			line[0] = gx; line[1] = gy; line[2] = gz;
			line[3] = (gx + ax) / 2; line[4] = (gy + ay) / 2; line[5] = (gz + az) / 2;
			line[6] = (gx + bx) / 2; line[7] = (gy + by) / 2; line[8] = (gz + bz) / 2;
			line[9] = (gx + cx) / 2; line[10] = (gy + cy) / 2; line[11] = (gz + cz) / 2;
			line[12] = nx; line[13] = ny; line[14] = nz; line[15] = tMax; line[16] = tMax;
			q.castSamples(4, a, b, c);
			rays += 4;
			// The smallest over the samples, the first sample on a tie.
			gT = q.aheadT[0]; gF = q.aheadFace[0];
			wT = q.behindT[0]; wF = q.behindFace[0];
			for (let k = 1; k < 4; k++) {
				if (q.aheadT[k] < gT) { gT = q.aheadT[k]; gF = q.aheadFace[k]; gX = line[3 * k]; gY = line[3 * k + 1]; gZ = line[3 * k + 2]; }
				if (q.behindT[k] < wT) { wT = q.behindT[k]; wF = q.behindFace[k]; wX = line[3 * k]; wY = line[3 * k + 1]; wZ = line[3 * k + 2]; }
			}
		} else {
			q.castLine(gx, gy, gz, nx, ny, nz, tMax, tMax, a, b, c);
			rays++;
			gT = q.lineAheadT; gF = q.lineAheadFace;
			wT = q.lineBehindT; wF = q.lineBehindFace;
		}
		if (gF >= 0) {
			gp.value[t] = gT; gp.hitFace[t] = gF;
			gp.from[t3] = gX; gp.from[t3 + 1] = gY; gp.from[t3 + 2] = gZ;
		}
		if (wF >= 0) {
			th.value[t] = wT; th.hitFace[t] = wF;
			th.from[t3] = wX; th.from[t3 + 1] = wY; th.from[t3 + 2] = wZ;
		}
	}
	return rays;
}

/** An edge-connected group of flagged faces. */
export interface DistanceRegion {
	faceCount: number;
	area: number;
	/** Area-weighted centroid of the group's faces. */
	centroid: [number, number, number];
	/** Smallest value in the group and the face it belongs to. */
	min: number;
	minFace: number;
}

/** What one direction's per-face values add up to against the cell size. */
export interface DistanceSummary {
	/** Smallest finite value (Infinity if none), the face, the face its ray hit and the two points. */
	min: number;
	minFace: number;
	minHitFace: number;
	/** Where the ray started and where it hit (NaN when min is Infinity). */
	minFrom: [number, number, number];
	minTo: [number, number, number];
	/** Faces (and their area) whose value is below threshold (model units). */
	threshold: number;
	flaggedFaces: number;
	flaggedArea: number;
	/** Bin i: faces with value in [i, i + 1) cells; then ≥ bins cells (finite), then no hit. */
	histogram: { binCells: 1; counts: Uint32Array; areas: Float64Array; beyond: number; noHit: number };
	/** Largest first (by area), at most maxRegions; regionCount is the number before the cap. */
	regions: DistanceRegion[];
	regionCount: number;
}

/** Area of every face (half the cross product's length). */
export function faceAreas(mesh: MeshBuffers): Float64Array {
	const p = mesh.positions, idx = mesh.indices;
	const n = (idx.length / 3) | 0;
	const out = new Float64Array(n);
	for (let t = 0, t3 = 0; t < n; t++, t3 += 3) {
		const a3 = 3 * idx[t3], b3 = 3 * idx[t3 + 1], c3 = 3 * idx[t3 + 2];
		const e1x = p[b3] - p[a3], e1y = p[b3 + 1] - p[a3 + 1], e1z = p[b3 + 2] - p[a3 + 2];
		const e2x = p[c3] - p[a3], e2y = p[c3 + 1] - p[a3 + 1], e2z = p[c3 + 2] - p[a3 + 2];
		const nx = e1y * e2z - e1z * e2y, ny = e1z * e2x - e1x * e2z, nz = e1x * e2y - e1y * e2x;
		out[t] = 0.5 * Math.sqrt(nx * nx + ny * ny + nz * nz);
	}
	return out;
}

/**
 * Summary of one direction: minimum, counts under `threshold`, histogram in cells of `cellSize`
 * (`bins` bins of one cell), and edge-connected regions of faces under the threshold (faces are
 * joined across any edge they share, non-manifold edges included).
 */
export function summariseDistances(
	mesh: MeshBuffers,
	d: FaceDistances,
	opts: { cellSize: number; threshold: number; bins?: number; maxRegions?: number; areas?: Float64Array; edges?: EdgeTable }
): DistanceSummary {
	const idx = mesh.indices, p = mesh.positions;
	const n = (idx.length / 3) | 0;
	const bins = opts.bins ?? 8;
	const areas = opts.areas ?? faceAreas(mesh);
	const counts = new Uint32Array(bins), binAreas = new Float64Array(bins);
	let beyond = 0, noHit = 0, flaggedFaces = 0, flaggedArea = 0, min = Infinity, minFace = -1;
	const flagged = new Uint8Array(n);
	for (let t = 0; t < n; t++) {
		const v = d.value[t];
		if (v === Infinity) {
			noHit++;
			continue;
		}
		const bin = Math.floor(v / opts.cellSize);
		if (bin < bins) {
			counts[bin]++;
			binAreas[bin] += areas[t];
		} else beyond++;
		if (v < min) {
			min = v;
			minFace = t;
		}
		if (v < opts.threshold) {
			flagged[t] = 1;
			flaggedFaces++;
			flaggedArea += areas[t];
		}
	}
	const minFrom: [number, number, number] = [NaN, NaN, NaN], minTo: [number, number, number] = [NaN, NaN, NaN];
	let minHitFace = -1;
	if (minFace >= 0) {
		minHitFace = d.hitFace[minFace];
		const f3 = 3 * minFace;
		for (let k = 0; k < 3; k++) minFrom[k] = d.from[f3 + k];
		// Recompute the hit point from the face's own normal, the same ray the measure cast.
		const a3 = 3 * idx[f3], b3 = 3 * idx[f3 + 1], c3 = 3 * idx[f3 + 2];
		const e1x = p[b3] - p[a3], e1y = p[b3 + 1] - p[a3 + 1], e1z = p[b3 + 2] - p[a3 + 2];
		const e2x = p[c3] - p[a3], e2y = p[c3 + 1] - p[a3 + 1], e2z = p[c3 + 2] - p[a3 + 2];
		const nx = e1y * e2z - e1z * e2y, ny = e1z * e2x - e1x * e2z, nz = e1x * e2y - e1y * e2x;
		const len = Math.sqrt(nx * nx + ny * ny + nz * nz);
		// Inward or outward: the hit lies on whichever side the ray went; the hit face tells.
		const h3 = 3 * minHitFace;
		const hx = (p[3 * idx[h3]] + p[3 * idx[h3 + 1]] + p[3 * idx[h3 + 2]]) / 3 - minFrom[0];
		const hy = (p[3 * idx[h3] + 1] + p[3 * idx[h3 + 1] + 1] + p[3 * idx[h3 + 2] + 1]) / 3 - minFrom[1];
		const hz = (p[3 * idx[h3] + 2] + p[3 * idx[h3 + 1] + 2] + p[3 * idx[h3 + 2] + 2]) / 3 - minFrom[2];
		const s = (hx * nx + hy * ny + hz * nz >= 0 ? 1 : -1) / len;
		minTo[0] = minFrom[0] + s * nx * min;
		minTo[1] = minFrom[1] + s * ny * min;
		minTo[2] = minFrom[2] + s * nz * min;
	}
	const maxRegions = opts.maxRegions ?? 20;
	const all: DistanceRegion[] = [];
	if (flaggedFaces > 0) {
		const edges = opts.edges ?? buildEdges(idx, p.length / 3);
		const { heEdge, edgeStart, heSorted } = edges;
		const queue = new Uint32Array(flaggedFaces);
		for (let seed = 0; seed < n; seed++) {
			if (flagged[seed] !== 1) continue;
			let head = 0, tail = 0;
			queue[tail++] = seed;
			flagged[seed] = 2;
			let area = 0, cx = 0, cy = 0, cz = 0, rMin = Infinity, rMinFace = -1;
			while (head < tail) {
				const t = queue[head++];
				const t3 = 3 * t;
				const at = areas[t];
				area += at;
				const a3 = 3 * idx[t3], b3 = 3 * idx[t3 + 1], c3 = 3 * idx[t3 + 2];
				cx += (at * (p[a3] + p[b3] + p[c3])) / 3;
				cy += (at * (p[a3 + 1] + p[b3 + 1] + p[c3 + 1])) / 3;
				cz += (at * (p[a3 + 2] + p[b3 + 2] + p[c3 + 2])) / 3;
				if (d.value[t] < rMin) {
					rMin = d.value[t];
					rMinFace = t;
				}
				for (let k = 0; k < 3; k++) {
					const e = heEdge[t3 + k];
					if (e === 0xffffffff) continue;
					for (let j = edgeStart[e], je = edgeStart[e + 1]; j < je; j++) {
						const u = (heSorted[j] / 3) | 0;
						if (flagged[u] === 1) {
							flagged[u] = 2;
							queue[tail++] = u;
						}
					}
				}
			}
			all.push({ faceCount: tail, area, centroid: area > 0 ? [cx / area, cy / area, cz / area] : [NaN, NaN, NaN], min: rMin, minFace: rMinFace });
		}
		all.sort((x, y) => y.area - x.area || y.faceCount - x.faceCount);
	}
	return {
		min,
		minFace,
		minHitFace,
		minFrom,
		minTo,
		threshold: opts.threshold,
		flaggedFaces,
		flaggedArea,
		histogram: { binCells: 1, counts, areas: binAreas, beyond, noHit },
		regions: all.slice(0, maxRegions),
		regionCount: all.length
	};
}

/** Longest edges against the cell size. */
export interface LongEdgeSummary {
	/** The longest edges, longest first: vertex pairs (2 per edge) and lengths. */
	longestVerts: Uint32Array;
	longestLengths: Float64Array;
	/** Faces whose longest edge exceeds limitCells × cellSize, their area and its share of the total. */
	limit: number;
	facesOver: number;
	areaOver: number;
	areaShareOver: number;
}

export function longEdges(mesh: MeshBuffers, opts: { cellSize: number; limitCells?: number; keep?: number; edges?: EdgeTable; areas?: Float64Array }): LongEdgeSummary {
	const p = mesh.positions, idx = mesh.indices;
	const n = (idx.length / 3) | 0;
	const edges = opts.edges ?? buildEdges(idx, p.length / 3);
	const keep = Math.max(0, opts.keep ?? 10);
	const limit = (opts.limitCells ?? 1) * opts.cellSize;
	const areas = opts.areas ?? faceAreas(mesh);
	// Top `keep` by insertion into a short sorted list: O(E × keep) worst case, keep is small.
	const topLen = new Float64Array(keep).fill(-1), topEdge = new Int32Array(keep).fill(-1);
	let filled = 0;
	const { edgeLo, edgeHi, edgeCount } = edges;
	for (let e = 0; e < edgeCount; e++) {
		const a3 = 3 * edgeLo[e], b3 = 3 * edgeHi[e];
		const dx = p[b3] - p[a3], dy = p[b3 + 1] - p[a3 + 1], dz = p[b3 + 2] - p[a3 + 2];
		const len = Math.sqrt(dx * dx + dy * dy + dz * dz);
		if (keep === 0 || (filled === keep && len <= topLen[keep - 1])) continue;
		let i = filled < keep ? filled++ : keep - 1;
		while (i > 0 && topLen[i - 1] < len) {
			topLen[i] = topLen[i - 1];
			topEdge[i] = topEdge[i - 1];
			i--;
		}
		topLen[i] = len;
		topEdge[i] = e;
	}
	const longestVerts = new Uint32Array(2 * filled), longestLengths = new Float64Array(filled);
	for (let i = 0; i < filled; i++) {
		longestVerts[2 * i] = edgeLo[topEdge[i]];
		longestVerts[2 * i + 1] = edgeHi[topEdge[i]];
		longestLengths[i] = topLen[i];
	}
	const lim2 = limit * limit;
	let facesOver = 0, areaOver = 0, areaTotal = 0;
	for (let t = 0, t3 = 0; t < n; t++, t3 += 3) {
		const a3 = 3 * idx[t3], b3 = 3 * idx[t3 + 1], c3 = 3 * idx[t3 + 2];
		const x1 = p[b3] - p[a3], y1 = p[b3 + 1] - p[a3 + 1], z1 = p[b3 + 2] - p[a3 + 2];
		const x2 = p[c3] - p[b3], y2 = p[c3 + 1] - p[b3 + 1], z2 = p[c3 + 2] - p[b3 + 2];
		const x3 = p[a3] - p[c3], y3 = p[a3 + 1] - p[c3 + 1], z3 = p[a3 + 2] - p[c3 + 2];
		const l2 = Math.max(x1 * x1 + y1 * y1 + z1 * z1, x2 * x2 + y2 * y2 + z2 * z2, x3 * x3 + y3 * y3 + z3 * z3);
		areaTotal += areas[t];
		if (l2 > lim2) {
			facesOver++;
			areaOver += areas[t];
		}
	}
	return { longestVerts, longestLengths, limit, facesOver, areaOver, areaShareOver: areaTotal > 0 ? areaOver / areaTotal : 0 };
}

/** Edges where two faces meet at more than the feature angle. */
export interface SharpEdges {
	angleDeg: number;
	/** 2 per edge: the vertex pair (smaller id first). */
	verts: Uint32Array;
	/** Angle between the two face normals, degrees (0 flat, 180 folded back). */
	angles: Float32Array;
	/** Edges with one face, or more than two, are not feature edges; counted so none is lost silently. */
	boundaryOrNonManifold: number;
}

export function sharpEdges(mesh: MeshBuffers, opts: { angleDeg?: number; edges?: EdgeTable } = {}): SharpEdges {
	const p = mesh.positions, idx = mesh.indices;
	const edges = opts.edges ?? buildEdges(idx, p.length / 3);
	const angleDeg = opts.angleDeg ?? DEFAULT_FEATURE_ANGLE_DEG;
	const cosLim = Math.cos((angleDeg * Math.PI) / 180);
	const { edgeCount, edgeStart, heSorted, edgeLo, edgeHi } = edges;
	const outV: number[] = [], outA: number[] = [];
	let other = 0;
	const normal = (t: number, out: Float64Array, o: number) => {
		const t3 = 3 * t;
		const a3 = 3 * idx[t3], b3 = 3 * idx[t3 + 1], c3 = 3 * idx[t3 + 2];
		const e1x = p[b3] - p[a3], e1y = p[b3 + 1] - p[a3 + 1], e1z = p[b3 + 2] - p[a3 + 2];
		const e2x = p[c3] - p[a3], e2y = p[c3 + 1] - p[a3 + 1], e2z = p[c3 + 2] - p[a3 + 2];
		out[o] = e1y * e2z - e1z * e2y; out[o + 1] = e1z * e2x - e1x * e2z; out[o + 2] = e1x * e2y - e1y * e2x;
	};
	const nn = new Float64Array(6);
	for (let e = 0; e < edgeCount; e++) {
		const s = edgeStart[e];
		if (edgeStart[e + 1] - s !== 2) {
			other++;
			continue;
		}
		normal((heSorted[s] / 3) | 0, nn, 0);
		normal((heSorted[s + 1] / 3) | 0, nn, 3);
		const l0 = Math.sqrt(nn[0] * nn[0] + nn[1] * nn[1] + nn[2] * nn[2]), l1 = Math.sqrt(nn[3] * nn[3] + nn[4] * nn[4] + nn[5] * nn[5]);
		if (!(l0 > 0 && l1 > 0)) continue;
		const c = (nn[0] * nn[3] + nn[1] * nn[4] + nn[2] * nn[5]) / (l0 * l1);
		if (c < cosLim) {
			outV.push(edgeLo[e], edgeHi[e]);
			outA.push((Math.acos(Math.max(-1, Math.min(1, c))) * 180) / Math.PI);
		}
	}
	return { angleDeg, verts: Uint32Array.from(outV), angles: Float32Array.from(outA), boundaryOrNonManifold: other };
}

/**
 * Wavefront OBJ of line segments: the vertices the pairs use (renumbered from 1) and one
 * `l a b` element per pair, e.g. sharp edges or longest edges for a meshing tool or a viewer.
 */
export function edgesToObj(positions: Float64Array | Float32Array, pairs: Uint32Array, comment = 'edges'): string {
	const remap = new Map<number, number>();
	const lines: string[] = [`# ${comment.replace(/[\r\n]+/g, ' ')}: ${pairs.length / 2} segments`];
	const elems: string[] = [];
	for (let i = 0; i + 1 < pairs.length; i += 2) {
		const ids: number[] = [];
		for (const v of [pairs[i], pairs[i + 1]]) {
			let k = remap.get(v);
			if (k === undefined) {
				k = remap.size + 1;
				remap.set(v, k);
				lines.push(`v ${positions[3 * v]} ${positions[3 * v + 1]} ${positions[3 * v + 2]}`);
			}
			ids.push(k);
		}
		elems.push(`l ${ids[0]} ${ids[1]}`);
	}
	return lines.concat(elems).join('\n') + '\n';
}

export interface CellSizeOptions {
	/** Target cell size, model units (> 0). */
	cellSize: number;
	/** Walls and gaps under this many cells are flagged. Default 2: common practice wants at least two cells across a gap or wall to resolve it. */
	thinCells?: number;
	/** Faces with an edge over this many cells count as coarse. Default 1. */
	longEdgeCells?: number;
	featureAngleDeg?: number;
	/** Histogram bins of one cell each. Default 8. */
	bins?: number;
	maxRegions?: number;
	/**
	 * Rays stop at this distance (model units). Default bins × cellSize, the histogram's range: a
	 * wall or gap wider than that is no cell-size concern, and bounded rays cost less. Per-face
	 * values beyond it read Infinity ("nothing within range"). Infinity measures everything.
	 */
	maxDistance?: number;
	/** The mesh's edge table when the caller has one already (topology builds the same). */
	edges?: EdgeTable;
	/**
	 * Wall and gap measured already (thickness-node.ts faceDistancesBothParallel, with the same
	 * cellSize and maxDistance): the ray stage is skipped and only the summaries are made.
	 */
	distances?: { thickness: FaceDistances; gap: FaceDistances };
}

/** Everything the cell-size checks produce for one mesh. */
export interface CellSizeResult {
	cellSize: number;
	/** Per-face wall thickness (inward) and gap (outward), Infinity where no hit within maxDistance. */
	maxDistance: number;
	thickness: FaceDistances;
	gap: FaceDistances;
	wall: DistanceSummary;
	narrowGap: DistanceSummary;
	longEdges: LongEdgeSummary;
	sharp: SharpEdges;
	timings: { buildBvh: number; rays: number; summaries: number };
}

/** The ray range analyseCellSize uses for these options (pass it to the parallel measure too). */
export function cellSizeMaxDistance(opts: Pick<CellSizeOptions, 'cellSize' | 'bins' | 'maxDistance'>): number {
	return opts.maxDistance ?? (opts.bins ?? 8) * opts.cellSize;
}

/**
 * The cell-size checks in one call: one BVH and one edge table shared by all measures.
 * Throws on a cell size that is not a positive finite number.
 */
export function analyseCellSize(mesh: MeshBuffers, opts: CellSizeOptions): CellSizeResult {
	const cellSize = opts.cellSize;
	if (!(cellSize > 0) || !Number.isFinite(cellSize)) throw new Error(`Cell size must be a positive number (got ${cellSize}).`);
	const maxDistance = cellSizeMaxDistance(opts);
	const t0 = performance.now();
	const rayBvh = opts.distances ? undefined : buildRayBvh(mesh);
	const t1 = performance.now();
	const { thickness, gap } = opts.distances ?? faceDistancesBoth(mesh, { cellSize, maxDistance, rayBvh });
	const t2 = performance.now();
	const areas = faceAreas(mesh);
	const edges = opts.edges ?? buildEdges(mesh.indices, mesh.positions.length / 3);
	const threshold = (opts.thinCells ?? DEFAULT_THIN_CELLS) * cellSize;
	const sOpts = { cellSize, threshold, bins: opts.bins, maxRegions: opts.maxRegions, areas, edges };
	const wall = summariseDistances(mesh, thickness, sOpts);
	const narrowGap = summariseDistances(mesh, gap, sOpts);
	const le = longEdges(mesh, { cellSize, limitCells: opts.longEdgeCells, edges, areas });
	const sharp = sharpEdges(mesh, { angleDeg: opts.featureAngleDeg, edges });
	const t3 = performance.now();
	return {
		cellSize,
		maxDistance,
		thickness,
		gap,
		wall,
		narrowGap,
		longEdges: le,
		sharp,
		timings: { buildBvh: t1 - t0, rays: t2 - t1, summaries: t3 - t2 }
	};
}

/** The report's cell-size section from one analysis (the per-face arrays stay out of the JSON). */
export function cellSizeChecksOf(r: CellSizeResult, thinCells: number, ms: number): CellSizeChecks {
	const h = r.cellSize;
	const finding = (d: DistanceSummary): WallGapFinding | null =>
		d.minFace < 0 ? null : { value: d.min, cells: d.min / h, face: d.minFace, otherFace: d.minHitFace, from: [...d.minFrom], to: [...d.minTo] };
	const regions = (d: DistanceSummary): WallGapRegion[] =>
		d.regions.map((g) => ({ faces: g.faceCount, area: g.area, centroid: [...g.centroid], min: g.min, minCells: g.min / h, minFace: g.minFace }));
	const hist = (d: DistanceSummary) => ({ counts: Array.from(d.histogram.counts), beyond: d.histogram.beyond, noHit: d.histogram.noHit });
	return {
		cellSize: h,
		thinCells,
		range: r.maxDistance,
		thinnestWall: finding(r.wall),
		narrowestGap: finding(r.narrowGap),
		thinWallFaces: r.wall.flaggedFaces,
		thinWallArea: r.wall.flaggedArea,
		narrowGapFaces: r.narrowGap.flaggedFaces,
		narrowGapArea: r.narrowGap.flaggedArea,
		wallHistogram: hist(r.wall),
		gapHistogram: hist(r.narrowGap),
		wallRegions: regions(r.wall),
		wallRegionCount: r.wall.regionCount,
		gapRegions: regions(r.narrowGap),
		gapRegionCount: r.narrowGap.regionCount,
		longestEdge: r.longEdges.longestLengths.length ? r.longEdges.longestLengths[0] : 0,
		longEdgeCells: r.longEdges.limit / h,
		coarseFaces: r.longEdges.facesOver,
		coarseAreaShare: r.longEdges.areaShareOver,
		featureAngleDeg: r.sharp.angleDeg,
		sharpEdges: r.sharp.angles.length,
		ms
	};
}
