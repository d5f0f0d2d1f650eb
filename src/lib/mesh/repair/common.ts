/** Shared helpers of the repair operations: input checks, compaction, shells, measures. */
import { buildEdges, type EdgeTable } from '../edges';
import type { MeshBuffers } from '../types';
import { referencedBbox } from '../quality';
import { validateMesh } from '../validate';

/** A repair refusal: the input cannot be repaired as given (malformed buffers, bad parameters). */
export class RepairError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'RepairError';
	}
}

/** What every repair operation returns: a new mesh (the input is never changed) and what it did. */
export interface RepairResult<C> {
	mesh: MeshBuffers;
	counts: C;
}

/** Refuses malformed buffers (validate.ts), the message led by the operation's name. O(V + F). */
export function checkMesh(mesh: MeshBuffers, op: string): void {
	validateMesh(mesh, { context: op });
}

export function checkPositive(value: unknown, name: string, op: string, allowZero = false): number {
	if (typeof value !== 'number' || !Number.isFinite(value) || value < 0 || (!allowZero && value === 0)) {
		throw new RepairError(`${op}: ${name} must be a ${allowZero ? 'non-negative' : 'positive'} finite number, got ${String(value)}`);
	}
	return value;
}

/**
 * New mesh with the faces whose keep[t] is 1 (all when keep is omitted), indices remapped through
 * vertexMap when given, and unreferenced vertices dropped. Vertex order is kept.
 */
export function compactMesh(positions: Float64Array, indices: Uint32Array, keep?: Uint8Array, vertexMap?: Uint32Array): MeshBuffers {
	const vertCount = positions.length / 3;
	const triCount = indices.length / 3;
	let kept = 0;
	for (let t = 0; t < triCount; t++) if (!keep || keep[t]) kept++;
	const used = new Int32Array(vertCount).fill(-1);
	for (let t = 0; t < triCount; t++) {
		if (keep && !keep[t]) continue;
		for (let k = 0; k < 3; k++) {
			const v = vertexMap ? vertexMap[indices[3 * t + k]] : indices[3 * t + k];
			used[v] = 0;
		}
	}
	let n = 0;
	for (let v = 0; v < vertCount; v++) if (used[v] === 0) used[v] = n++;
	const outPos = new Float64Array(3 * n);
	for (let v = 0; v < vertCount; v++) {
		const w = used[v];
		if (w < 0) continue;
		outPos[3 * w] = positions[3 * v];
		outPos[3 * w + 1] = positions[3 * v + 1];
		outPos[3 * w + 2] = positions[3 * v + 2];
	}
	const outIdx = new Uint32Array(3 * kept);
	for (let t = 0, o = 0; t < triCount; t++) {
		if (keep && !keep[t]) continue;
		for (let k = 0; k < 3; k++) {
			const v = vertexMap ? vertexMap[indices[3 * t + k]] : indices[3 * t + k];
			outIdx[o++] = used[v];
		}
	}
	return { positions: outPos, indices: outIdx };
}

/** Diagonal of the bounding box of the referenced vertices (0 for an empty mesh). */
export function bboxDiagonal(mesh: MeshBuffers): number {
	if (mesh.indices.length === 0) return 0;
	const { min, max } = referencedBbox(mesh.positions, mesh.indices);
	return Math.hypot(max[0] - min[0], max[1] - min[1], max[2] - min[2]);
}

export function findRoot(parent: Int32Array, x: number): number {
	while (parent[x] !== x) {
		const g = parent[parent[x]];
		parent[x] = g;
		x = g;
	}
	return x;
}

export function unionRoots(parent: Int32Array, a: number, b: number): void {
	a = findRoot(parent, a);
	b = findRoot(parent, b);
	if (a === b) return;
	if (a < b) parent[b] = a;
	else parent[a] = b;
}

export interface FaceShells {
	shellCount: number;
	/** Shell of each face, numbered in order of each shell's first face. */
	faceShell: Int32Array;
}

/**
 * Shells (faces joined through any shared edge, non-manifold edges included), the same rule as
 * topology.ts, over an edge table the caller already has. O(H α(H)).
 */
export function faceShells(et: EdgeTable, triCount: number): FaceShells {
	const parent = new Int32Array(triCount);
	for (let t = 0; t < triCount; t++) parent[t] = t;
	const { edgeCount, edgeStart, heSorted } = et;
	for (let e = 0; e < edgeCount; e++) {
		const s = edgeStart[e], end = edgeStart[e + 1];
		const f0 = (heSorted[s] / 3) | 0;
		for (let i = s + 1; i < end; i++) unionRoots(parent, f0, (heSorted[i] / 3) | 0);
	}
	const faceShell = new Int32Array(triCount);
	let shellCount = 0;
	for (let t = 0; t < triCount; t++) {
		const r = findRoot(parent, t);
		faceShell[t] = r === t ? shellCount++ : faceShell[r];
	}
	return { shellCount, faceShell };
}

export function edgesOf(mesh: MeshBuffers): EdgeTable {
	return buildEdges(mesh.indices, mesh.positions.length / 3);
}

/** Twice the area vector of triangle t into out[0..2]: (b − a) × (c − a). */
export function faceCross(p: Float64Array, ix: Uint32Array, t: number, out: Float64Array): void {
	const a3 = 3 * ix[3 * t], b3 = 3 * ix[3 * t + 1], c3 = 3 * ix[3 * t + 2];
	const ax = p[a3], ay = p[a3 + 1], az = p[a3 + 2];
	const ux = p[b3] - ax, uy = p[b3 + 1] - ay, uz = p[b3 + 2] - az;
	const vx = p[c3] - ax, vy = p[c3 + 1] - ay, vz = p[c3 + 2] - az;
	out[0] = uy * vz - uz * vy;
	out[1] = uz * vx - ux * vz;
	out[2] = ux * vy - uy * vx;
}

/**
 * Six times the signed volume of the tetrahedron (o, a, b, c) of triangle t (divergence theorem:
 * summed over a closed shell this is 6 × its volume, positive when faces wind CCW seen from outside).
 */
export function faceVolume6(p: Float64Array, ix: Uint32Array, t: number, ox: number, oy: number, oz: number): number {
	const a3 = 3 * ix[3 * t], b3 = 3 * ix[3 * t + 1], c3 = 3 * ix[3 * t + 2];
	const ax = p[a3] - ox, ay = p[a3 + 1] - oy, az = p[a3 + 2] - oz;
	const bx = p[b3] - ox, by = p[b3 + 1] - oy, bz = p[b3 + 2] - oz;
	const cx = p[c3] - ox, cy = p[c3 + 1] - oy, cz = p[c3 + 2] - oz;
	return ax * (by * cz - bz * cy) + ay * (bz * cx - bx * cz) + az * (bx * cy - by * cx);
}
