/**
 * Remove small shells (the floating specks implicit-surface generators leave). A shell is removed
 * when it is below every threshold given (fewer faces than maxFaces, less than maxAreaShare of the
 * total area, less than maxVolumeShare of the total |volume|); the largest shell by area is always
 * kept. O(F α(F)).
 */
import { collapsedFaces } from '../topology';
import { buildEdges } from '../edges';
import { checkMesh, compactMesh, faceCross, faceShells, faceVolume6, RepairError, type RepairResult } from './common';
import type { MeshBuffers } from '../types';

export interface SmallShellOptions {
	/** Remove shells with fewer faces than this. */
	maxFaces?: number;
	/** Remove shells with less than this share (0..1) of the total surface area. */
	maxAreaShare?: number;
	/** Remove shells with less than this share (0..1) of the summed |signed volume| of all shells. */
	maxVolumeShare?: number;
}

export interface SmallShellCounts {
	shellsBefore: number;
	shellsRemoved: number;
	facesRemoved: number;
	/** Share of the total area removed, 0..1. */
	areaShareRemoved: number;
}

export function removeSmallShells(mesh: MeshBuffers, opts: SmallShellOptions = {}): RepairResult<SmallShellCounts> {
	const op = 'remove-small-shells';
	checkMesh(mesh, op);
	const { maxFaces, maxAreaShare, maxVolumeShare } = opts;
	for (const [name, v] of [['maxFaces', maxFaces], ['maxAreaShare', maxAreaShare], ['maxVolumeShare', maxVolumeShare]] as const) {
		if (v !== undefined && (typeof v !== 'number' || !Number.isFinite(v) || v < 0)) {
			throw new RepairError(`${op}: ${name} must be a non-negative finite number, got ${String(v)}`);
		}
	}
	if (maxFaces === undefined && maxAreaShare === undefined && maxVolumeShare === undefined) {
		throw new RepairError(`${op}: give at least one of maxFaces, maxAreaShare, maxVolumeShare`);
	}
	const p = mesh.positions, ix = mesh.indices;
	const triCount = ix.length / 3;
	const skip = collapsedFaces(ix).mask;
	const et = buildEdges(ix, p.length / 3, skip);
	const { shellCount, faceShell } = faceShells(et, triCount);
	const faces = new Uint32Array(shellCount);
	const area = new Float64Array(shellCount);
	const vol = new Float64Array(shellCount);
	const n = new Float64Array(3);
	for (let t = 0; t < triCount; t++) {
		const s = faceShell[t];
		faces[s]++;
		faceCross(p, ix, t, n);
		area[s] += 0.5 * Math.hypot(n[0], n[1], n[2]);
		vol[s] += faceVolume6(p, ix, t, 0, 0, 0) / 6;
	}
	let totalArea = 0, totalVol = 0, largest = 0;
	for (let s = 0; s < shellCount; s++) {
		totalArea += area[s];
		totalVol += Math.abs(vol[s]);
		if (area[s] > area[largest]) largest = s;
	}
	const remove = new Uint8Array(shellCount);
	let shellsRemoved = 0, removedArea = 0;
	for (let s = 0; s < shellCount; s++) {
		if (s === largest) continue;
		const small =
			(maxFaces === undefined || faces[s] < maxFaces) &&
			(maxAreaShare === undefined || area[s] < maxAreaShare * totalArea) &&
			(maxVolumeShare === undefined || Math.abs(vol[s]) < maxVolumeShare * totalVol);
		if (small) {
			remove[s] = 1;
			shellsRemoved++;
			removedArea += area[s];
		}
	}
	const keep = new Uint8Array(triCount);
	let facesRemoved = 0;
	for (let t = 0; t < triCount; t++) {
		if (remove[faceShell[t]]) facesRemoved++;
		else keep[t] = 1;
	}
	return {
		mesh: compactMesh(p, ix, keep),
		counts: { shellsBefore: shellCount, shellsRemoved, facesRemoved, areaShareRemoved: totalArea > 0 ? removedArea / totalArea : 0 }
	};
}
