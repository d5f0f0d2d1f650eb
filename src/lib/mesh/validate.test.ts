import { describe, expect, it } from 'vitest';
import { InvalidMeshError, validateMesh, type MeshProblem } from './validate';
import { MeshReadError, type MeshBuffers } from './types';
import { unitCube } from './testing/test-meshes';

function problem(m: MeshBuffers, opts = {}): MeshProblem | null {
	try {
		validateMesh(m, opts);
		return null;
	} catch (e) {
		expect(e).toBeInstanceOf(InvalidMeshError);
		expect(e).toBeInstanceOf(MeshReadError);
		return (e as InvalidMeshError).code;
	}
}

describe('the one mesh validator', () => {
	it('passes a good mesh and names each kind of problem by its code', () => {
		expect(problem(unitCube())).toBeNull();
		expect(problem({ positions: [0, 0, 0] as unknown as Float64Array, indices: new Uint32Array(0) })).toBe('buffer-type');
		expect(problem({ positions: new Float64Array(4), indices: new Uint32Array(0) })).toBe('ragged-positions');
		expect(problem({ positions: new Float64Array(9), indices: Uint32Array.from([0, 1]) })).toBe('ragged-indices');
		expect(problem({ positions: new Float64Array(9), indices: Uint32Array.from([0, 1, 3]) })).toBe('index-out-of-range');
		expect(problem({ positions: Float64Array.from([0, 0, 0, 1, 0, 0, 0, Infinity, 0]), indices: Uint32Array.from([0, 1, 2]) })).toBe('non-finite-coordinate');
		expect(problem(unitCube(), { maxFaces: 11 })).toBe('too-many-faces');
		expect(problem(unitCube(), { maxFaces: 12 })).toBeNull();
	});

	it('puts the context before the message', () => {
		expect(() => validateMesh({ positions: new Float64Array(9), indices: Uint32Array.from([0, 1, 7]) }, { context: 'orient' })).toThrow(
			/^orient: face 0 refers to vertex 7, but there are only 3 vertices$/
		);
	});
});
