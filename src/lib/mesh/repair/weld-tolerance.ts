/**
 * Weld vertices closer than a tolerance through a uniform grid hash. With cells of 2 × tol, the
 * ball of radius tol around a vertex overlaps at most two cells per axis (its own and the one on
 * the nearer side), so 8 cells are searched instead of the 27 a cell of tol needs; any pair closer
 * than tol is still found. Expected O(V) for bounded cell occupancy, O(V) memory.
 */
import { checkMesh, checkPositive, compactMesh, RepairError, type RepairResult } from './common';
import type { MeshBuffers } from '../types';

export interface WeldCounts {
	/** Vertices that were merged into an earlier one. */
	verticesMerged: number;
	/** Faces dropped because two of their corners became the same vertex. */
	facesDropped: number;
}

/** Cell coordinates must stay exact integers in a float64 (and hash well). */
const MAX_CELL_COORD = 2 ** 52;

/**
 * Greedy clustering in vertex order: vertex v joins the first representative (a vertex not merged
 * itself) closer than tol, else it becomes a representative; merged vertices take the
 * representative's position, so no representative moves and no chain drifts further than tol.
 * Faces left with a repeated vertex are dropped; unreferenced vertices are dropped.
 */
export function weldByTolerance(mesh: MeshBuffers, tol: number): RepairResult<WeldCounts> {
	const op = 'weld';
	checkMesh(mesh, op);
	checkPositive(tol, 'tolerance', op);
	const p = mesh.positions, ix = mesh.indices;
	const vertCount = p.length / 3;
	const inv = 1 / (2 * tol);
	let size = 16;
	while (size < 2 * vertCount) size *= 2;
	const mask = size - 1;
	// Open-addressed table of occupied cells: cell coordinates, and the head of the cell's list of representatives.
	const keyX = new Float64Array(size), keyY = new Float64Array(size), keyZ = new Float64Array(size);
	const head = new Int32Array(size).fill(-1);
	const nextRep = new Int32Array(vertCount).fill(-1);
	const rep = new Uint32Array(vertCount);
	const tol2 = tol * tol;
	let merged = 0;
	const slotOf = (cx: number, cy: number, cz: number, insert: boolean): number => {
		let h = (Math.imul(cx | 0, 73856093) ^ Math.imul(cy | 0, 19349663) ^ Math.imul(cz | 0, 83492791)) & mask;
		for (;;) {
			if (head[h] < 0) return insert ? h : -1;
			if (keyX[h] === cx && keyY[h] === cy && keyZ[h] === cz) return h;
			h = (h + 1) & mask;
		}
	};
	for (let v = 0; v < vertCount; v++) {
		const x = p[3 * v], y = p[3 * v + 1], z = p[3 * v + 2];
		const sx = x * inv, sy = y * inv, sz = z * inv;
		const cx = Math.floor(sx), cy = Math.floor(sy), cz = Math.floor(sz);
		// Neighbour cell on the nearer side along each axis.
		const nx = sx - cx < 0.5 ? -1 : 1, ny = sy - cy < 0.5 ? -1 : 1, nz = sz - cz < 0.5 ? -1 : 1;
		if (Math.abs(cx) > MAX_CELL_COORD || Math.abs(cy) > MAX_CELL_COORD || Math.abs(cz) > MAX_CELL_COORD) {
			throw new RepairError(`${op}: tolerance ${tol} is too small for coordinates of size ${Math.max(Math.abs(x), Math.abs(y), Math.abs(z))}`);
		}
		let found = -1;
		for (let dz = 0; dz <= 1 && found < 0; dz++) {
			for (let dy = 0; dy <= 1 && found < 0; dy++) {
				for (let dx = 0; dx <= 1 && found < 0; dx++) {
					const s = slotOf(cx + dx * nx, cy + dy * ny, cz + dz * nz, false);
					if (s < 0) continue;
					for (let r = head[s]; r >= 0; r = nextRep[r]) {
						const ex = p[3 * r] - x, ey = p[3 * r + 1] - y, ez = p[3 * r + 2] - z;
						if (ex * ex + ey * ey + ez * ez < tol2) {
							found = r;
							break;
						}
					}
				}
			}
		}
		if (found >= 0) {
			rep[v] = found;
			if (found !== v) merged++;
			continue;
		}
		rep[v] = v;
		const s = slotOf(cx, cy, cz, true);
		if (head[s] < 0) {
			keyX[s] = cx;
			keyY[s] = cy;
			keyZ[s] = cz;
		}
		nextRep[v] = head[s];
		head[s] = v;
	}
	const triCount = ix.length / 3;
	const keep = new Uint8Array(triCount);
	let facesDropped = 0;
	for (let t = 0; t < triCount; t++) {
		const a = rep[ix[3 * t]], b = rep[ix[3 * t + 1]], c = rep[ix[3 * t + 2]];
		if (a === b || b === c || a === c) facesDropped++;
		else keep[t] = 1;
	}
	return { mesh: compactMesh(p, ix, keep, rep), counts: { verticesMerged: merged, facesDropped } };
}
