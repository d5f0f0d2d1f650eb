/**
 * The one check of mesh buffers every stage relies on: typed arrays, whole triangles and
 * coordinate triples, indices in range, finite coordinates, and a face limit. Readers produce
 * valid buffers already; this guards buffers that come from elsewhere (repairs, tests, callers).
 */
import { MeshReadError, type MeshBuffers } from './types';

export type MeshProblem = 'buffer-type' | 'ragged-positions' | 'ragged-indices' | 'index-out-of-range' | 'non-finite-coordinate' | 'too-many-faces';

/** A mesh the engine cannot measure or change as given; `code` says why, the message says where. */
export class InvalidMeshError extends MeshReadError {
	constructor(
		readonly code: MeshProblem,
		message: string
	) {
		super(message);
		this.name = 'InvalidMeshError';
	}
}

export interface ValidateOptions {
	/** Refuse more triangles than this (default: no limit). */
	maxFaces?: number;
	/** Put before the message, e.g. the repair step's name. */
	context?: string;
}

/** Throws InvalidMeshError for the first problem found; O(V + F). */
export function validateMesh(mesh: MeshBuffers, opts: ValidateOptions = {}): void {
	const fail = (code: MeshProblem, message: string): never => {
		throw new InvalidMeshError(code, opts.context ? `${opts.context}: ${message}` : message);
	};
	const { positions, indices } = mesh;
	if (!(positions instanceof Float64Array) || !(indices instanceof Uint32Array)) fail('buffer-type', 'mesh needs Float64Array positions and Uint32Array indices');
	if (positions.length % 3 !== 0) fail('ragged-positions', `position buffer length ${positions.length} is not a multiple of 3`);
	if (indices.length % 3 !== 0) fail('ragged-indices', `index buffer length ${indices.length} is not a multiple of 3`);
	const triCount = indices.length / 3;
	if (opts.maxFaces !== undefined && triCount > opts.maxFaces) fail('too-many-faces', `mesh has ${triCount} triangles, more than the limit of ${opts.maxFaces}`);
	const vertCount = positions.length / 3;
	const bad = firstIndexOutOfRange(indices, vertCount);
	if (bad >= 0) fail('index-out-of-range', `face ${(bad / 3) | 0} refers to vertex ${indices[bad]}, but there are only ${vertCount} vertices`);
	const odd = firstNonFinite(positions);
	if (odd >= 0) {
		fail('non-finite-coordinate', `vertex ${(odd / 3) | 0} has a coordinate that is not a finite number (${positions[odd]}); the mesh cannot be measured`);
	}
}

// The scans are functions of their own that return their result: in a fresh process code after an
// optimised loop that has not run yet makes V8 drop the loop's code at its exit and compile again.

/** First entry of `indices` that is not below vertCount, or −1. */
export function firstIndexOutOfRange(indices: Uint32Array, vertCount: number): number {
	for (let i = 0; i < indices.length; i++) if (indices[i] >= vertCount) return i;
	return -1;
}

function firstNonFinite(positions: Float64Array): number {
	// x − x is 0 for every finite x and NaN for NaN and ±∞.
	for (let i = 0; i < positions.length; i++) if (positions[i] - positions[i] !== 0) return i;
	return -1;
}
