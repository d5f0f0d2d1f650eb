/**
 * Rescale: multiplies every coordinate by one factor about the origin. It is the repair for a file
 * written in the wrong units (STL and OBJ store none), e.g. ×1000 for metres read as millimetres.
 * Topology is untouched; lengths scale by the factor, areas by its square, volumes by its cube.
 */
import { checkMesh, checkPositive, type RepairResult } from './common';
import type { MeshBuffers } from '../types';

export interface RescaleCounts {
	factor: number;
	verticesMoved: number;
}

export function rescale(mesh: MeshBuffers, factor: number): RepairResult<RescaleCounts> {
	checkMesh(mesh, 'rescale');
	checkPositive(factor, 'factor', 'rescale');
	const src = mesh.positions;
	const positions = new Float64Array(src.length);
	for (let i = 0; i < src.length; i++) positions[i] = src[i] * factor;
	return { mesh: { positions, indices: mesh.indices.slice() }, counts: { factor, verticesMoved: src.length / 3 } };
}
