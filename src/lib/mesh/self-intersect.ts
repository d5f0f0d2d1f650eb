/**
 * Self-intersection count of a triangle mesh: a flat linear BVH (bvh.ts) traversed against itself
 * for candidate pairs, then an exact closed-triangle test per pair.
 *
 * Pair rule (closed triangles, the usual one, so counts compare with other libraries):
 * - no shared vertex: the pair counts when the triangles touch or cross at all, coplanar overlaps too;
 * - one shared vertex: counts when the edge of one opposite the shared vertex meets the other face;
 * - a shared edge: counts only when the faces fold onto each other (coplanar, same side of the edge);
 * - the same three vertices: counts;
 * - faces of exactly zero area are left out and reported in `degenerateSkipped`.
 * Sharing is by vertex index, so unwelded copies of a vertex count as touching.
 *
 * Tolerance: none. Every sign is exact on the stored float64 coordinates (Shewchuk's adaptive
 * orient2d/orient3d via robust-predicates, behind a float filter whose error bound is relative to the
 * operands' magnitudes, so it scales with the model by construction). Faces that miss each other by
 * any positive distance do not count, whatever the model size.
 *
 * Triangle test: a pair is rejected when one triangle lies strictly on one side of the other's plane
 * (the first step of Möller 1997); otherwise closed triangles in different planes meet exactly when an
 * edge of one meets the other (segment–triangle via orient3d signs of the Plücker type, as in
 * Guigue–Devillers 2003), and coplanar ones are tested in a coordinate-plane projection with orient2d.
 * Pairs sharing one vertex skip the segment tests when either opposite edge stays strictly on one
 * side of the other plane (the faces then meet only at the shared vertex).
 *
 * Neighbours: most candidate pairs of a fine closed mesh share a vertex. Pairs sharing a vertex
 * whose fan is clear (vertex-fans.ts: one closed fan that an exact coordinate projection lays out
 * once around the vertex) provably do not count under the rule above and are passed over without
 * a test; every other pair gets the exact test, so counts do not depend on it.
 *
 * Memory per face: 3 vertex ids, the face id and a float32 box rounded outward (40 bytes), plus
 * about 0.4 BVH nodes of 36 bytes; corners are read from `positions` per pair. The fans take 12
 * bytes per face and 5 per vertex while the clear flags (1 byte per vertex) are found. Touching
 * fresh pages is what setup time is made of on small VMs, so nothing else is copied.
 *
 * Splitting work: `faceRange` filters by the lower face index; `shard` splits the traversal into
 * tasks (used by self-intersect-node.ts). Both partition the pairs exactly.
 */
import { buildBvhSorted, f32Down as f32DownImport, f32Up as f32UpImport, morton3 as morton3Import, mortonScale, sortByCode, sortByCodeInto, type FlatBvh } from './bvh';
import { ccw2 as ccw2Import, dropAxis as dropAxisImport, isDegenerateTriangle, side3 as side3Import } from './predicates';
import type { MeshBuffers } from './types';
import { DEFAULT_SAMPLE_LIMIT } from './tolerances';
import { validateMesh } from './validate';
import { pointBounds } from './bounds';
import { clearVertices, vertexFaces } from './vertex-fans';

// Bound once (see predicates.ts: some loaders make each use of an import a getter call).
const ccw2 = ccw2Import;
const dropAxis = dropAxisImport;
const side3 = side3Import;
const f32Down = f32DownImport;
const f32Up = f32UpImport;
const morton3 = morton3Import;

export interface SelfIntersectionSample {
	/** Face indices, a < b. */
	a: number;
	b: number;
	/** A point on the intersection of the two faces (float, for display). */
	point: [number, number, number];
}

export interface SelfIntersectionStats {
	buildMs: number;
	traverseMs: number;
	/** Triangle pairs whose boxes overlapped (tested by the exact rule unless settled by a clear vertex). */
	candidatePairs: number;
	/** Candidate pairs sharing a clear vertex (vertex-fans.ts): settled without a test. */
	clearSkips: number;
	/** Calls that fell through the float filter to the exact predicate, plus exact line tests. */
	exactTests: number;
	/** Tasks this call ran (see `shard`). */
	tasks: number;
}

export interface SelfIntersectionResult {
	pairs: number;
	sample: SelfIntersectionSample[];
	degenerateSkipped: number;
	ms: number;
	stats?: SelfIntersectionStats;
}

export interface SelfIntersectionOptions {
	/** Most sample entries kept (default 100): the pairs with the smallest (a, b), so the sample does not depend on traversal order or sharding. */
	sampleLimit?: number;
	/**
	 * Count only pairs whose smaller face index lies in [from, to). Disjoint ranges covering
	 * [0, triCount) partition the pairs exactly. This filters pairs; the traversal still walks the
	 * whole tree, so use `shard` to split work.
	 */
	faceRange?: [number, number];
	/**
	 * Split the traversal: the self-traversal is unrolled into a fixed list of independent node-pair
	 * tasks (the same list for every call on the same mesh), and this call runs only the tasks it is
	 * handed, either `index` of every `count` (static), or whatever `nextTask()` returns until it
	 * returns −1 (dynamic, e.g. an Atomics counter shared between workers). Tasks partition the pair
	 * space exactly, so shard counts sum to the full count.
	 */
	shard?: { index: number; count: number } | { nextTask: () => number };
	/** How many tasks to unroll the traversal into (default 512; must match across shards). */
	taskTarget?: number;
}

export const DEFAULT_TASK_TARGET = 512;

/** Triangle data in BVH slot order: slot k holds face faceOf[k]. */
export interface PreparedMesh {
	faceCount: number;
	liveCount: number;
	degenerateSkipped: number;
	positions: Float64Array;
	faceOf: Uint32Array;
	verts: Uint32Array;
	/** 6 per slot: closed box, float32 rounded outward (conservative; the exact test decides). */
	box: Float32Array;
	bvh: FlatBvh<Float32Array>;
	/**
	 * Per vertex: 1 when its fan can hold no counted pair (vertex-fans.ts), so pairs sharing that
	 * vertex are passed over untested; null tests every pair.
	 */
	clear: Uint8Array | null;
}

/**
 * isDegenerateTriangle with a float filter first: a cross-product component whose magnitude beats
 * the orient2d error bound (Shewchuk's ccwerrboundA ≈ 3.3e-16 relative) is certainly nonzero.
 */
function isDegenerate(positions: Float64Array, a: number, b: number, c: number): boolean {
	if (a === b || b === c || a === c) return true;
	const a3 = 3 * a, b3 = 3 * b, c3 = 3 * c;
	const ux = positions[b3] - positions[a3], uy = positions[b3 + 1] - positions[a3 + 1], uz = positions[b3 + 2] - positions[a3 + 2];
	const vx = positions[c3] - positions[a3], vy = positions[c3 + 1] - positions[a3 + 1], vz = positions[c3 + 2] - positions[a3 + 2];
	const p1 = uy * vz, p2 = uz * vy, p3 = uz * vx, p4 = ux * vz, p5 = ux * vy, p6 = uy * vx;
	const E = 4e-16;
	// All three filters every time: a branch first taken after the loop is optimised would make V8
	// drop the code and compile it again.
	const nx = Math.abs(p1 - p2) > E * (Math.abs(p1) + Math.abs(p2));
	const ny = Math.abs(p3 - p4) > E * (Math.abs(p3) + Math.abs(p4));
	const nz = Math.abs(p5 - p6) > E * (Math.abs(p5) + Math.abs(p6));
	if (nx || ny || nz) return false;
	return isDegenerateTriangle(positions, a, b, c);
}

/** Morton quantisation of box centres (times two), from the bounds of all positions. */
export interface CodeFrame {
	lx: number;
	ly: number;
	lz: number;
	sx: number;
	sy: number;
	sz: number;
}

export function codeFrame(positions: Float64Array): CodeFrame {
	const [lx, ly, lz, hx, hy, hz] = pointBounds(positions);
	return { lx: 2 * lx, ly: 2 * ly, lz: 2 * lz, sx: mortonScale(2 * lx, 2 * hx), sy: mortonScale(2 * ly, 2 * hy), sz: mortonScale(2 * lz, 2 * hz) };
}

/**
 * Faces [from, to): live[t] = 1 for faces of nonzero area (else 0), codes[t] = Morton code of the
 * box centre. Buffers must already be valid (validateMesh).
 */
export function encodeFaces(mesh: MeshBuffers, frame: CodeFrame, from: number, to: number, live: Uint8Array, codes: Uint32Array): void {
	const { positions, indices } = mesh;
	const { lx, ly, lz, sx, sy, sz } = frame;
	for (let t = from; t < to; t++) {
		const t3 = 3 * t;
		const a = indices[t3], b = indices[t3 + 1], c = indices[t3 + 2];
		if (isDegenerate(positions, a, b, c)) {
			live[t] = 0;
			continue;
		}
		live[t] = 1;
		const a3 = 3 * a, b3 = 3 * b, c3 = 3 * c;
		const ax = positions[a3], ay = positions[a3 + 1], az = positions[a3 + 2];
		const bx = positions[b3], by = positions[b3 + 1], bz = positions[b3 + 2];
		const cx = positions[c3], cy = positions[c3 + 1], cz = positions[c3 + 2];
		const mx = (ax < bx ? (ax < cx ? ax : cx) : bx < cx ? bx : cx) + (ax > bx ? (ax > cx ? ax : cx) : bx > cx ? bx : cx);
		const my = (ay < by ? (ay < cy ? ay : cy) : by < cy ? by : cy) + (ay > by ? (ay > cy ? ay : cy) : by > cy ? by : cy);
		const mz = (az < bz ? (az < cz ? az : cz) : bz < cz ? bz : cz) + (az > bz ? (az > cz ? az : cz) : bz > cz ? bz : cz);
		codes[t] = morton3(((mx - lx) * sx) | 0, ((my - ly) * sy) | 0, ((mz - lz) * sz) | 0);
	}
}

/**
 * Sorts the live faces by code. Returns the sorted codes and slotFace (slot → face), length liveCount.
 */
export function sortLiveFaces(live: Uint8Array, codes: Uint32Array, faceCount: number): { codes: Uint32Array; slotFace: Uint32Array } {
	const liveCount = countLive(live, faceCount);
	const liveFace = new Uint32Array(liveCount);
	const liveCodes = new Uint32Array(liveCount);
	gatherLive(live, codes, faceCount, liveFace, liveCodes);
	const sorted = sortByCode(liveCodes);
	const slotFace = sorted.order;
	remapSlots(slotFace, liveFace, liveCount);
	return { codes: sorted.codes, slotFace };
}

// The loops of the sort each in a function of their own, so a fresh process compiles each once.
function countLive(live: Uint8Array, faceCount: number): number {
	let liveCount = 0;
	for (let t = 0; t < faceCount; t++) liveCount += live[t];
	return liveCount;
}

function gatherLive(live: Uint8Array, codes: Uint32Array, faceCount: number, liveFace: Uint32Array, liveCodes: Uint32Array): void {
	for (let t = 0, k = 0; t < faceCount; t++) {
		if (live[t]) {
			liveFace[k] = t;
			liveCodes[k++] = codes[t];
		}
	}
}

function remapSlots(slotFace: Uint32Array, liveFace: Uint32Array, liveCount: number): void {
	for (let k = 0; k < liveCount; k++) slotFace[k] = liveFace[slotFace[k]];
}

/**
 * sortLiveFaces into caller-owned arrays (e.g. SharedArrayBuffer views, so the sort touches no fresh
 * pages): outCodes and outSlotFace receive the result, tmpCodes and tmpFace are scratch, all of
 * length ≥ faceCount. Same order as sortLiveFaces. Returns the live face count.
 */
export function sortLiveFacesInto(
	live: Uint8Array,
	codes: Uint32Array,
	faceCount: number,
	outCodes: Uint32Array,
	outSlotFace: Uint32Array,
	tmpCodes: Uint32Array,
	tmpFace: Uint32Array
): number {
	const liveCount = countLive(live, faceCount);
	if (liveCount === faceCount) {
		sortByCodeInto(codes, null, faceCount, outCodes, outSlotFace, tmpCodes, tmpFace);
		return liveCount;
	}
	gatherLive(live, codes, faceCount, tmpFace, tmpCodes);
	sortByCodeInto(tmpCodes, tmpFace, liveCount, outCodes, outSlotFace, tmpCodes, tmpFace);
	return liveCount;
}

/** Slot-ordered arrays of the prepared mesh (may live in SharedArrayBuffers). */
export interface SlotArrays {
	faceOf: Uint32Array;
	verts: Uint32Array;
	box: Float32Array;
}

export function allocSlotArrays(liveCount: number, shared = false): SlotArrays {
	const buf = (bytes: number) => (shared ? new SharedArrayBuffer(bytes) : new ArrayBuffer(bytes));
	return {
		faceOf: new Uint32Array(buf(4 * liveCount)),
		verts: new Uint32Array(buf(12 * liveCount)),
		box: new Float32Array(buf(24 * liveCount))
	};
}

/** Fills slots [from, to) of `out` from the faces slotFace[from .. to − 1]. */
export function gatherSlots(mesh: MeshBuffers, slotFace: Uint32Array, from: number, to: number, out: SlotArrays): void {
	const { positions, indices } = mesh;
	const { faceOf, verts, box } = out;
	for (let k = from; k < to; k++) {
		const t = slotFace[k];
		faceOf[k] = t;
		const t3 = 3 * t;
		const a = indices[t3], b = indices[t3 + 1], c = indices[t3 + 2];
		const k3 = 3 * k;
		verts[k3] = a;
		verts[k3 + 1] = b;
		verts[k3 + 2] = c;
		const a3 = 3 * a, b3 = 3 * b, c3 = 3 * c;
		const ax = positions[a3], ay = positions[a3 + 1], az = positions[a3 + 2];
		const bx = positions[b3], by = positions[b3 + 1], bz = positions[b3 + 2];
		const cx = positions[c3], cy = positions[c3 + 1], cz = positions[c3 + 2];
		const k6 = 6 * k;
		box[k6] = f32Down(ax < bx ? (ax < cx ? ax : cx) : bx < cx ? bx : cx);
		box[k6 + 1] = f32Down(ay < by ? (ay < cy ? ay : cy) : by < cy ? by : cy);
		box[k6 + 2] = f32Down(az < bz ? (az < cz ? az : cz) : bz < cz ? bz : cz);
		box[k6 + 3] = f32Up(ax > bx ? (ax > cx ? ax : cx) : bx > cx ? bx : cx);
		box[k6 + 4] = f32Up(ay > by ? (ay > cy ? ay : cy) : by > cy ? by : cy);
		box[k6 + 5] = f32Up(az > bz ? (az > cz ? az : cz) : bz > cz ? bz : cz);
	}
}

export const LEAF_SIZE = 8;

/**
 * Gathers the non-degenerate faces and builds the hierarchy. Throws on malformed buffers.
 * Passes: validation; per face in file order (degeneracy, Morton code of the box centre); radix
 * sort; one gather into Morton order, from which boxes and node bounds are computed reading
 * memory in sequence; the faces around each vertex and the clear vertices (vertex-fans.ts).
 * self-intersect-node.ts runs the same passes split over workers.
 */
export function prepareMesh(mesh: MeshBuffers): PreparedMesh {
	validateMesh(mesh);
	const faceCount = mesh.indices.length / 3;
	const live = new Uint8Array(faceCount);
	const rawCodes = new Uint32Array(faceCount);
	encodeFaces(mesh, codeFrame(mesh.positions), 0, faceCount, live, rawCodes);
	const { codes, slotFace } = sortLiveFaces(live, rawCodes, faceCount);
	const liveCount = slotFace.length;
	const slots = allocSlotArrays(liveCount);
	gatherSlots(mesh, slotFace, 0, liveCount, slots);
	const bvh = buildBvhSorted(codes, slots.box, LEAF_SIZE);
	const vertCount = mesh.positions.length / 3;
	const fanStart = new Uint32Array(vertCount + 1);
	const fanFaces = new Uint32Array(3 * liveCount);
	vertexFaces(mesh.indices, vertCount, live, fanStart, fanFaces);
	const clear = new Uint8Array(vertCount);
	clearVertices(mesh.positions, mesh.indices, fanStart, fanFaces, 0, vertCount, clear);
	return { faceCount, liveCount, degenerateSkipped: faceCount - liveCount, positions: mesh.positions, ...slots, bvh, clear };
}

/**
 * Unrolls the self-traversal breadth-first into independent tasks, pairs (a, b) of nodes: a === b
 * means "all pairs inside node a", a !== b "all pairs between a and b". Deterministic.
 */
export function makeTasks(bvh: FlatBvh<Float32Array | Float64Array>, target: number): Int32Array {
	let tasks: number[] = [0, 0];
	if (bvh.nodeCount === 0 || bvh.count[0] === 0) return new Int32Array(0);
	const { firstChild, bounds } = bvh;
	for (let round = 0; round < 64 && tasks.length / 2 < target; round++) {
		const next: number[] = [];
		let grew = false;
		for (let k = 0; k < tasks.length; k += 2) {
			const a = tasks[k], b = tasks[k + 1];
			const fa = firstChild[a], fb = firstChild[b];
			if (a === b) {
				if (fa < 0) next.push(a, a);
				else {
					grew = true;
					next.push(fa, fa, fa + 1, fa + 1);
					if (boxesOverlap(bounds, fa, fa + 1)) next.push(fa, fa + 1);
				}
			} else if (fa < 0 && fb < 0) next.push(a, b);
			else {
				grew = true;
				// Split both sides when both are inner nodes, so tasks shrink evenly.
				const as = fa < 0 ? [a] : [fa, fa + 1];
				const bs = fb < 0 ? [b] : [fb, fb + 1];
				for (const x of as) for (const y of bs) if (boxesOverlap(bounds, x, y)) next.push(x, y);
			}
		}
		tasks = next;
		if (!grew) break;
	}
	return Int32Array.from(tasks);
}

function boxesOverlap(bounds: Float32Array | Float64Array, a: number, b: number): boolean {
	const a6 = 6 * a, b6 = 6 * b;
	return (
		bounds[a6] <= bounds[b6 + 3] && bounds[b6] <= bounds[a6 + 3] &&
		bounds[a6 + 1] <= bounds[b6 + 4] && bounds[b6 + 1] <= bounds[a6 + 4] &&
		bounds[a6 + 2] <= bounds[b6 + 5] && bounds[b6 + 2] <= bounds[a6 + 5]
	);
}

/** Float filter bound for the plane-side determinant; Shewchuk's o3derrboundA is (7 + 56ε)ε ≈ 7.8e-16. */
const SIDE_ERR = 1e-15;

/**
 * Per-call state. tp/pl are scratch for the pair under test: slot 0 is the first triangle, slot 1
 * the second (9 coordinates; normal (b − a) × (c − a) and the float filter's absolute terms).
 * Reading corners from `positions` per pair instead of keeping slot-ordered copies saves ~120 bytes
 * of freshly written memory per face, which dominated setup time.
 */
interface Ctx {
	positions: Float64Array;
	tp: Float64Array;
	pl: Float64Array;
	exact: number;
	/** Scratch for the hit point of the last positive test. */
	hit: Float64Array;
}

/** Exact sign of point p against the plane of the triangle in scratch slot k, float filter first. */
function sidePlane(ctx: Ctx, k: number, px: number, py: number, pz: number): number {
	const tp = ctx.tp, pl = ctx.pl;
	const k9 = 9 * k, k6 = 6 * k;
	const dx = px - tp[k9], dy = py - tp[k9 + 1], dz = pz - tp[k9 + 2];
	const det = dx * pl[k6] + dy * pl[k6 + 1] + dz * pl[k6 + 2];
	const bound = SIDE_ERR * (Math.abs(dx) * pl[k6 + 3] + Math.abs(dy) * pl[k6 + 4] + Math.abs(dz) * pl[k6 + 5]);
	if (det > bound) return 1;
	if (det < -bound) return -1;
	ctx.exact++;
	return side3(tp[k9], tp[k9 + 1], tp[k9 + 2], tp[k9 + 3], tp[k9 + 4], tp[k9 + 5], tp[k9 + 6], tp[k9 + 7], tp[k9 + 8], px, py, pz);
}

/** Picks the two kept coordinates of point p for projection `axis` (see dropAxis). */
function projU(axis: number, x: number, y: number, z: number): number {
	return axis === 0 ? y : axis === 1 ? z : x;
}
function projV(axis: number, x: number, y: number, z: number): number {
	return axis === 0 ? z : axis === 1 ? x : y;
}

/** Closed 2D point-in-triangle for a non-degenerate triangle. */
function inTri2(pu: number, pv: number, au: number, av: number, bu: number, bv: number, cu: number, cv: number): boolean {
	const o = ccw2(au, av, bu, bv, cu, cv);
	return ccw2(au, av, bu, bv, pu, pv) * o >= 0 && ccw2(bu, bv, cu, cv, pu, pv) * o >= 0 && ccw2(cu, cv, au, av, pu, pv) * o >= 0;
}

/** Proper crossing of 2D segments pq and rs (interiors cross at one point). */
function properCross2(pu: number, pv: number, qu: number, qv: number, ru: number, rv: number, su: number, sv: number): boolean {
	const d1 = ccw2(pu, pv, qu, qv, ru, rv), d2 = ccw2(pu, pv, qu, qv, su, sv);
	if (d1 * d2 >= 0) return false;
	const d3 = ccw2(ru, rv, su, sv, pu, pv), d4 = ccw2(ru, rv, su, sv, qu, qv);
	return d3 * d4 < 0;
}

/** Closed 2D point-on-segment. */
function onSeg2(pu: number, pv: number, qu: number, qv: number, xu: number, xv: number): boolean {
	return (
		ccw2(pu, pv, qu, qv, xu, xv) === 0 &&
		Math.min(pu, qu) <= xu && xu <= Math.max(pu, qu) &&
		Math.min(pv, qv) <= xv && xv <= Math.max(pv, qv)
	);
}

function setHit(ctx: Ctx, x: number, y: number, z: number): void {
	ctx.hit[0] = x;
	ctx.hit[1] = y;
	ctx.hit[2] = z;
}

/**
 * Closed segment pq against the closed triangle in scratch slot t, given the exact signs sp, sq of
 * p and q against that triangle's plane.
 */
function segTri(ctx: Ctx, px: number, py: number, pz: number, qx: number, qy: number, qz: number, sp: number, sq: number, t: number): boolean {
	if ((sp > 0 && sq > 0) || (sp < 0 && sq < 0)) return false;
	const tp = ctx.tp, t9 = 9 * t;
	const ax = tp[t9], ay = tp[t9 + 1], az = tp[t9 + 2];
	const bx = tp[t9 + 3], by = tp[t9 + 4], bz = tp[t9 + 5];
	const cx = tp[t9 + 6], cy = tp[t9 + 7], cz = tp[t9 + 8];
	if (sp === 0 && sq === 0) {
		// Segment in the plane: 2D test in the triangle's best projection.
		const axis = dropAxis(ax, ay, az, bx, by, bz, cx, cy, cz);
		const pu = projU(axis, px, py, pz), pv = projV(axis, px, py, pz);
		const qu = projU(axis, qx, qy, qz), qv = projV(axis, qx, qy, qz);
		const au = projU(axis, ax, ay, az), av = projV(axis, ax, ay, az);
		const bu = projU(axis, bx, by, bz), bv = projV(axis, bx, by, bz);
		const cu = projU(axis, cx, cy, cz), cv = projV(axis, cx, cy, cz);
		ctx.exact++;
		if (inTri2(pu, pv, au, av, bu, bv, cu, cv)) return setHit(ctx, px, py, pz), true;
		if (inTri2(qu, qv, au, av, bu, bv, cu, cv)) return setHit(ctx, qx, qy, qz), true;
		if (onSeg2(pu, pv, qu, qv, au, av)) return setHit(ctx, ax, ay, az), true;
		if (onSeg2(pu, pv, qu, qv, bu, bv)) return setHit(ctx, bx, by, bz), true;
		if (onSeg2(pu, pv, qu, qv, cu, cv)) return setHit(ctx, cx, cy, cz), true;
		if (
			properCross2(pu, pv, qu, qv, au, av, bu, bv) ||
			properCross2(pu, pv, qu, qv, bu, bv, cu, cv) ||
			properCross2(pu, pv, qu, qv, cu, cv, au, av)
		) {
			return setHit(ctx, (px + qx) / 2, (py + qy) / 2, (pz + qz) / 2), true;
		}
		return false;
	}
	// The segment meets the plane at one point; the line pq passes through the closed triangle iff
	// the three tetrahedra (p, q, edge) have no two strictly opposite signs.
	ctx.exact++;
	const o1 = side3(px, py, pz, qx, qy, qz, ax, ay, az, bx, by, bz);
	const o2 = side3(px, py, pz, qx, qy, qz, bx, by, bz, cx, cy, cz);
	if (o1 * o2 < 0) return false;
	const o3 = side3(px, py, pz, qx, qy, qz, cx, cy, cz, ax, ay, az);
	if (o1 * o3 < 0 || o2 * o3 < 0) return false;
	// Hit point by float interpolation of the plane distances.
	const t6 = 6 * t, pl = ctx.pl;
	const dp = (px - ax) * pl[t6] + (py - ay) * pl[t6 + 1] + (pz - az) * pl[t6 + 2];
	const dq = (qx - ax) * pl[t6] + (qy - ay) * pl[t6 + 1] + (qz - az) * pl[t6 + 2];
	const s = sp === 0 ? 0 : sq === 0 ? 1 : dp / (dp - dq);
	setHit(ctx, px + s * (qx - px), py + s * (qy - py), pz + s * (qz - pz));
	return true;
}

/** Coplanar non-degenerate triangles in scratch slots i, j: closed 2D overlap. */
function coplanarTriTri(ctx: Ctx, i: number, j: number): boolean {
	const tp = ctx.tp, i9 = 9 * i, j9 = 9 * j;
	const axis = dropAxis(tp[i9], tp[i9 + 1], tp[i9 + 2], tp[i9 + 3], tp[i9 + 4], tp[i9 + 5], tp[i9 + 6], tp[i9 + 7], tp[i9 + 8]);
	const u = axis === 0 ? 1 : axis === 1 ? 2 : 0;
	const v = axis === 0 ? 2 : axis === 1 ? 0 : 1;
	const au = tp[i9 + u], av = tp[i9 + v], bu = tp[i9 + 3 + u], bv = tp[i9 + 3 + v], cu = tp[i9 + 6 + u], cv = tp[i9 + 6 + v];
	const du = tp[j9 + u], dv = tp[j9 + v], eu = tp[j9 + 3 + u], ev = tp[j9 + 3 + v], fu = tp[j9 + 6 + u], fv = tp[j9 + 6 + v];
	ctx.exact++;
	for (let k = 0; k < 3; k++) {
		const o = j9 + 3 * k;
		if (inTri2(tp[o + u], tp[o + v], au, av, bu, bv, cu, cv)) return setHit(ctx, tp[o], tp[o + 1], tp[o + 2]), true;
	}
	for (let k = 0; k < 3; k++) {
		const o = i9 + 3 * k;
		if (inTri2(tp[o + u], tp[o + v], du, dv, eu, ev, fu, fv)) return setHit(ctx, tp[o], tp[o + 1], tp[o + 2]), true;
	}
	for (let k = 0; k < 3; k++) {
		const p = i9 + 3 * k, q = i9 + 3 * ((k + 1) % 3);
		for (let m = 0; m < 3; m++) {
			const r = j9 + 3 * m, s = j9 + 3 * ((m + 1) % 3);
			if (properCross2(tp[p + u], tp[p + v], tp[q + u], tp[q + v], tp[r + u], tp[r + v], tp[s + u], tp[s + v])) {
				// Hit point: the crossing, located on edge pq by its 2D parameter (float, display only).
				const pu = tp[p + u], pv = tp[p + v], qu = tp[q + u], qv = tp[q + v];
				const ru = tp[r + u], rv = tp[r + v], su = tp[s + u], sv = tp[s + v];
				const den = (qu - pu) * (sv - rv) - (qv - pv) * (su - ru);
				const w = den === 0 ? 0.5 : ((ru - pu) * (sv - rv) - (rv - pv) * (su - ru)) / den;
				setHit(ctx, tp[p] + w * (tp[q] - tp[p]), tp[p + 1] + w * (tp[q + 1] - tp[p + 1]), tp[p + 2] + w * (tp[q + 2] - tp[p + 2]));
				return true;
			}
		}
	}
	return false;
}

function loadTriangle(ctx: Ctx, slot: number, a: number, b: number, c: number): void {
	const p = ctx.positions, tp = ctx.tp, pl = ctx.pl;
	const o9 = 9 * slot, o6 = 6 * slot;
	const a3 = 3 * a, b3 = 3 * b, c3 = 3 * c;
	const ax = p[a3], ay = p[a3 + 1], az = p[a3 + 2];
	const bx = p[b3], by = p[b3 + 1], bz = p[b3 + 2];
	const cx = p[c3], cy = p[c3 + 1], cz = p[c3 + 2];
	tp[o9] = ax; tp[o9 + 1] = ay; tp[o9 + 2] = az;
	tp[o9 + 3] = bx; tp[o9 + 4] = by; tp[o9 + 5] = bz;
	tp[o9 + 6] = cx; tp[o9 + 7] = cy; tp[o9 + 8] = cz;
	const ux = bx - ax, uy = by - ay, uz = bz - az;
	const vx = cx - ax, vy = cy - ay, vz = cz - az;
	pl[o6] = uy * vz - uz * vy;
	pl[o6 + 1] = uz * vx - ux * vz;
	pl[o6 + 2] = ux * vy - uy * vx;
	pl[o6 + 3] = Math.abs(uy * vz) + Math.abs(uz * vy);
	pl[o6 + 4] = Math.abs(uz * vx) + Math.abs(ux * vz);
	pl[o6 + 5] = Math.abs(ux * vy) + Math.abs(uy * vx);
}

/**
 * The pair rule on slots si, sj (see the file comment); the caller has loaded slot si into scratch
 * slot 0 (loadTriangle), since it stays fixed across a run of sj. Writes a point into ctx.hit when true.
 * Most candidates in a fine mesh are neighbours sharing a vertex or an edge; those are first tested
 * against the plane of slot 0 alone, reading the other face's corners straight from `positions`, so
 * most of them are rejected before the second face's plane is computed.
 */
export function testPair(ctx: Ctx, verts: Uint32Array, si: number, sj: number): boolean {
	const i3 = 3 * si, j3 = 3 * sj;
	const a0 = verts[i3], a1 = verts[i3 + 1], a2 = verts[i3 + 2];
	const b0 = verts[j3], b1 = verts[j3 + 1], b2 = verts[j3 + 2];
	const i = 0, j = 1;
	// Which corners of i are shared (bit k: corner k of i), and which corner of j each matches.
	const m0 = a0 === b0 ? 0 : a0 === b1 ? 1 : a0 === b2 ? 2 : -1;
	const m1 = a1 === b0 ? 0 : a1 === b1 ? 1 : a1 === b2 ? 2 : -1;
	const m2 = a2 === b0 ? 0 : a2 === b1 ? 1 : a2 === b2 ? 2 : -1;
	const shared = (m0 >= 0 ? 1 : 0) + (m1 >= 0 ? 1 : 0) + (m2 >= 0 ? 1 : 0);
	const tp = ctx.tp, i9 = 9 * i, j9 = 9 * j;
	if (shared === 0) {
		loadTriangle(ctx, 1, b0, b1, b2);
		const dx = tp[j9], dy = tp[j9 + 1], dz = tp[j9 + 2];
		const ex = tp[j9 + 3], ey = tp[j9 + 4], ez = tp[j9 + 5];
		const fx = tp[j9 + 6], fy = tp[j9 + 7], fz = tp[j9 + 8];
		const s0 = sidePlane(ctx, i, dx, dy, dz), s1 = sidePlane(ctx, i, ex, ey, ez), s2 = sidePlane(ctx, i, fx, fy, fz);
		if ((s0 > 0 && s1 > 0 && s2 > 0) || (s0 < 0 && s1 < 0 && s2 < 0)) return false;
		const ax = tp[i9], ay = tp[i9 + 1], az = tp[i9 + 2];
		const bx = tp[i9 + 3], by = tp[i9 + 4], bz = tp[i9 + 5];
		const cx = tp[i9 + 6], cy = tp[i9 + 7], cz = tp[i9 + 8];
		const r0 = sidePlane(ctx, j, ax, ay, az), r1 = sidePlane(ctx, j, bx, by, bz), r2 = sidePlane(ctx, j, cx, cy, cz);
		if ((r0 > 0 && r1 > 0 && r2 > 0) || (r0 < 0 && r1 < 0 && r2 < 0)) return false;
		if (s0 === 0 && s1 === 0 && s2 === 0) return coplanarTriTri(ctx, i, j);
		return (
			segTri(ctx, ax, ay, az, bx, by, bz, r0, r1, j) ||
			segTri(ctx, bx, by, bz, cx, cy, cz, r1, r2, j) ||
			segTri(ctx, cx, cy, cz, ax, ay, az, r2, r0, j) ||
			segTri(ctx, dx, dy, dz, ex, ey, ez, s0, s1, i) ||
			segTri(ctx, ex, ey, ez, fx, fy, fz, s1, s2, i) ||
			segTri(ctx, fx, fy, fz, dx, dy, dz, s2, s0, i)
		);
	}
	const pos = ctx.positions;
	if (shared === 1) {
		// With s shared: if the edge of j opposite s lies strictly on one side of i's plane, j meets
		// that plane only at s, so neither opposite edge can meet the other face; likewise for i.
		// Only when both opposite edges reach the other plane are the segment tests needed.
		const si = m0 >= 0 ? 0 : m1 >= 0 ? 1 : 2;
		const sj = m0 >= 0 ? m0 : m1 >= 0 ? m1 : m2;
		const vr = sj === 0 ? b1 : sj === 1 ? b2 : b0, vs = sj === 0 ? b2 : sj === 1 ? b0 : b1;
		const r3 = 3 * vr, s3 = 3 * vs;
		const rx = pos[r3], ry = pos[r3 + 1], rz = pos[r3 + 2], sx = pos[s3], sy = pos[s3 + 1], sz = pos[s3 + 2];
		const sr = sidePlane(ctx, i, rx, ry, rz), ss = sidePlane(ctx, i, sx, sy, sz);
		if ((sr > 0 && ss > 0) || (sr < 0 && ss < 0)) return false;
		loadTriangle(ctx, 1, b0, b1, b2);
		const p = i9 + 3 * ((si + 1) % 3), q = i9 + 3 * ((si + 2) % 3);
		const px = tp[p], py = tp[p + 1], pz = tp[p + 2], qx = tp[q], qy = tp[q + 1], qz = tp[q + 2];
		const sp = sidePlane(ctx, j, px, py, pz), sq = sidePlane(ctx, j, qx, qy, qz);
		if ((sp > 0 && sq > 0) || (sp < 0 && sq < 0)) return false;
		return segTri(ctx, px, py, pz, qx, qy, qz, sp, sq, j) || segTri(ctx, rx, ry, rz, sx, sy, sz, sr, ss, i);
	}
	if (shared === 2) {
		const oi = m0 < 0 ? 0 : m1 < 0 ? 1 : 2; // corner of i not shared
		const oj = 3 - (m0 < 0 ? 0 : m0) - (m1 < 0 ? 0 : m1) - (m2 < 0 ? 0 : m2); // corner of j not shared
		const ov3 = 3 * (oj === 0 ? b0 : oj === 1 ? b1 : b2);
		if (sidePlane(ctx, i, pos[ov3], pos[ov3 + 1], pos[ov3 + 2]) !== 0) return false;
		loadTriangle(ctx, 1, b0, b1, b2);
		const o = j9 + 3 * oj;
		// Coplanar: a fold when both opposite corners lie on the same side of the shared edge.
		const e0 = i9 + 3 * ((oi + 1) % 3), e1 = i9 + 3 * ((oi + 2) % 3), oo = i9 + 3 * oi;
		const axis = dropAxis(tp[i9], tp[i9 + 1], tp[i9 + 2], tp[i9 + 3], tp[i9 + 4], tp[i9 + 5], tp[i9 + 6], tp[i9 + 7], tp[i9 + 8]);
		const u = axis === 0 ? 1 : axis === 1 ? 2 : 0;
		const v = axis === 0 ? 2 : axis === 1 ? 0 : 1;
		ctx.exact++;
		const si = ccw2(tp[e0 + u], tp[e0 + v], tp[e1 + u], tp[e1 + v], tp[oo + u], tp[oo + v]);
		const sj = ccw2(tp[e0 + u], tp[e0 + v], tp[e1 + u], tp[e1 + v], tp[o + u], tp[o + v]);
		if (si !== sj) return false;
		setHit(ctx, (tp[e0] + tp[e1]) / 2, (tp[e0 + 1] + tp[e1 + 1]) / 2, (tp[e0 + 2] + tp[e1 + 2]) / 2);
		return true;
	}
	// Same three vertices.
	setHit(ctx, (tp[i9] + tp[i9 + 3] + tp[i9 + 6]) / 3, (tp[i9 + 1] + tp[i9 + 4] + tp[i9 + 7]) / 3, (tp[i9 + 2] + tp[i9 + 5] + tp[i9 + 8]) / 3);
	return true;
}

const bySampleKey = (x: SelfIntersectionSample, y: SelfIntersectionSample) => x.a - y.a || x.b - y.b;

/** Runs the pair search on prepared data. Used directly by the worker shards. */
export function findInPrepared(prep: PreparedMesh, opts: SelfIntersectionOptions = {}, buildMs = 0): SelfIntersectionResult {
	const t0 = performance.now();
	const sampleLimit = opts.sampleLimit ?? DEFAULT_SAMPLE_LIMIT;
	const rangeFrom = opts.faceRange ? opts.faceRange[0] : 0;
	const rangeTo = opts.faceRange ? opts.faceRange[1] : Infinity;
	const filtered = opts.faceRange !== undefined;
	const { bvh, verts, box, faceOf } = prep;
	const { firstChild, bounds, start, count } = bvh;
	const ctx: Ctx = { positions: prep.positions, tp: new Float64Array(18), pl: new Float64Array(12), exact: 0, hit: new Float64Array(3) };
	const sample: SelfIntersectionSample[] = [];
	let pairs = 0;
	// Candidate pairs and clear skips, kept by leafPairs.
	const counts = new Float64Array(2);
	let taskRuns = 0;
	const clear = prep.clear ?? new Uint8Array(prep.positions.length / 3);

	const tasks = makeTasks(bvh, opts.taskTarget ?? DEFAULT_TASK_TARGET);
	const taskCount = tasks.length / 2;
	const shard = opts.shard;
	let staticIndex = 0;
	let staticStep = 1;
	let nextTask: (() => number) | null = null;
	if (shard && 'nextTask' in shard) nextTask = shard.nextTask;
	else if (shard) {
		staticIndex = shard.index;
		staticStep = shard.count;
	}

	let stack = new Int32Array(1024);
	for (let task = nextTask ? nextTask() : staticIndex; task >= 0 && task < taskCount; task = nextTask ? nextTask() : task + staticStep) {
		taskRuns++;
		let sp = 0;
		stack[sp++] = tasks[2 * task];
		stack[sp++] = tasks[2 * task + 1];
		while (sp > 0) {
			let sa = 0, ea = 0, sb = 0, eb = 0, same = false, nb6 = -1;
			const b = stack[--sp];
			const a = stack[--sp];
			const fa = firstChild[a];
			if (a === b) {
				if (fa < 0) {
					sa = start[a]; ea = sa + count[a]; sb = sa; eb = ea; same = true;
				} else {
					if (sp + 6 > stack.length) {
						const grown = new Int32Array(stack.length * 2);
						grown.set(stack);
						stack = grown;
					}
					stack[sp++] = fa; stack[sp++] = fa;
					stack[sp++] = fa + 1; stack[sp++] = fa + 1;
					stack[sp++] = fa; stack[sp++] = fa + 1;
					continue;
				}
			} else {
				const a6 = 6 * a, b6 = 6 * b;
				if (
					bounds[a6] > bounds[b6 + 3] || bounds[b6] > bounds[a6 + 3] ||
					bounds[a6 + 1] > bounds[b6 + 4] || bounds[b6 + 1] > bounds[a6 + 4] ||
					bounds[a6 + 2] > bounds[b6 + 5] || bounds[b6 + 2] > bounds[a6 + 5]
				) continue;
				const fb = firstChild[b];
				if (fa >= 0 || fb >= 0) {
					if (sp + 4 > stack.length) {
						const grown = new Int32Array(stack.length * 2);
						grown.set(stack);
						stack = grown;
					}
					// Descend the larger side (or the only inner one).
					if (fb < 0 || (fa >= 0 && count[a] >= count[b])) {
						stack[sp++] = fa; stack[sp++] = b;
						stack[sp++] = fa + 1; stack[sp++] = b;
					} else {
						stack[sp++] = a; stack[sp++] = fb;
						stack[sp++] = a; stack[sp++] = fb + 1;
					}
					continue;
				}
				sa = start[a]; ea = sa + count[a]; sb = start[b]; eb = sb + count[b]; same = false; nb6 = b6;
			}
			// Leaf against leaf (or a leaf against itself): box test, then the exact pair rule.
			pairs += leafPairs(ctx, verts, box, clear, faceOf, bounds, sa, ea, sb, eb, same, nb6, filtered, rangeFrom, rangeTo, sample, sampleLimit, counts);
		}
	}
	sample.sort(bySampleKey);
	if (sample.length > sampleLimit) sample.length = sampleLimit;
	const traverseMs = performance.now() - t0;
	return {
		pairs,
		sample,
		degenerateSkipped: prep.degenerateSkipped,
		ms: buildMs + traverseMs,
		stats: { buildMs, traverseMs, candidatePairs: counts[0], clearSkips: counts[1], exactTests: ctx.exact, tasks: taskRuns }
	};
}

/**
 * The pairs of slots i in [sa, ea) and j in [sb, eb) (j > i when `same`, one leaf against itself)
 * whose boxes overlap, by the exact pair rule; nb6 ≥ 0 is 6 × leaf b's node, whose bounds first
 * rule out faces of a. Adds candidates and clear skips to counts[0] and counts[1]; returns the pairs
 * that count. A function of its own so that the traversal around it stays small: in a fresh
 * process V8 compiles that loop on the spot while it runs, and this one on a helper thread.
 */
function leafPairs(
	ctx: Ctx,
	verts: Uint32Array,
	box: Float32Array,
	clear: Uint8Array,
	faceOf: Uint32Array,
	bounds: Float32Array,
	sa: number,
	ea: number,
	sb: number,
	eb: number,
	same: boolean,
	nb6: number,
	filtered: boolean,
	rangeFrom: number,
	rangeTo: number,
	sample: SelfIntersectionSample[],
	sampleLimit: number,
	counts: Float64Array
): number {
	const hit = ctx.hit;
	let pairs = 0, candidates = 0, clearSkips = 0;
	for (let i = sa; i < ea; i++) {
		const i6 = 6 * i;
		const minX = box[i6], minY = box[i6 + 1], minZ = box[i6 + 2], maxX = box[i6 + 3], maxY = box[i6 + 4], maxZ = box[i6 + 5];
		// Every box of leaf b lies inside b's bounds: a face missing those meets none of them.
		if (
			nb6 >= 0 &&
			(bounds[nb6] > maxX || bounds[nb6 + 3] < minX || bounds[nb6 + 1] > maxY || bounds[nb6 + 4] < minY || bounds[nb6 + 2] > maxZ || bounds[nb6 + 5] < minZ)
		) continue;
		let loaded = false;
		const i3 = 3 * i;
		const a0 = verts[i3], a1 = verts[i3 + 1], a2 = verts[i3 + 2];
		const c0 = clear[a0], c1 = clear[a1], c2 = clear[a2];
		const anyClear = c0 | c1 | c2;
		for (let j = same ? i + 1 : sb; j < eb; j++) {
			const j6 = 6 * j;
			if (box[j6] > maxX || box[j6 + 3] < minX || box[j6 + 1] > maxY || box[j6 + 4] < minY || box[j6 + 2] > maxZ || box[j6 + 5] < minZ) continue;
			if (filtered) {
				const lo = Math.min(faceOf[i], faceOf[j]);
				if (lo < rangeFrom || lo >= rangeTo) continue;
			}
			candidates++;
			if (anyClear) {
				// A pair sharing a clear vertex (one or two shared, never three: vertex-fans.ts) cannot count.
				const j3 = 3 * j;
				const b0 = verts[j3], b1 = verts[j3 + 1], b2 = verts[j3 + 2];
				if (
					(c0 && (a0 === b0 || a0 === b1 || a0 === b2)) ||
					(c1 && (a1 === b0 || a1 === b1 || a1 === b2)) ||
					(c2 && (a2 === b0 || a2 === b1 || a2 === b2))
				) {
					clearSkips++;
					continue;
				}
			}
			if (!loaded) {
				loadTriangle(ctx, 0, a0, a1, a2);
				loaded = true;
			}
			if (testPair(ctx, verts, i, j)) {
				pairs++;
				if (sampleLimit > 0) {
					const fi = faceOf[i], fj = faceOf[j];
					sample.push({ a: Math.min(fi, fj), b: Math.max(fi, fj), point: [hit[0], hit[1], hit[2]] });
					// Keep the sampleLimit smallest (a, b) seen so far, so shards merge to the same sample.
					if (sample.length >= 2 * sampleLimit + 64) {
						sample.sort(bySampleKey);
						sample.length = sampleLimit;
					}
				}
			}
		}
	}
	counts[0] += candidates;
	counts[1] += clearSkips;
	return pairs;
}

/** Counts self-intersecting face pairs of `mesh` (see the file comment for the rule). */
export function findSelfIntersections(mesh: MeshBuffers, opts: SelfIntersectionOptions = {}): SelfIntersectionResult {
	const t0 = performance.now();
	const prep = prepareMesh(mesh);
	return findInPrepared(prep, opts, performance.now() - t0);
}
