import { describe, expect, it } from 'vitest';
import { removeDegenerateAndDuplicateFaces } from './remove-degenerate';
import { FORMATS, inspect, roundTrip } from '../testing/repair-support';
import { unitCube } from '../testing/test-meshes';
import type { MeshBuffers } from '../types';

/** Unit cube plus: a copy of face 0 wound the other way, a collinear sliver, a face with a repeated corner. */
function cubeWithBadFaces(): MeshBuffers {
	const c = unitCube();
	const positions = new Float64Array(c.positions.length + 3);
	positions.set(c.positions);
	positions.set([0.5, 0, 0], c.positions.length); // vertex 8 on edge 0–1
	const extra = [0, 1, 2, /* duplicate of face 0 (0, 2, 1), other winding */ 0, 8, 1, /* collinear */ 3, 3, 5 /* repeated corner */];
	const indices = new Uint32Array(c.indices.length + extra.length);
	indices.set(c.indices);
	indices.set(extra, c.indices.length);
	return { positions, indices };
}

describe.each(FORMATS)('removeDegenerateAndDuplicateFaces, mesh read back from %s', (_name, write, file) => {
	it('removes the duplicate, the collinear sliver and the collapsed face, leaving a watertight cube', () => {
		const m = roundTrip(cubeWithBadFaces(), write, file);
		const before = inspect(m);
		expect(before.duplicateFaces).toBe(1);
		expect(before.degenerateFaces).toBeGreaterThanOrEqual(2);
		const r = removeDegenerateAndDuplicateFaces(m);
		expect(r.counts.degenerateFaces).toBe(2);
		expect(r.counts.duplicateFaces).toBe(1);
		const rep = inspect(r.mesh);
		expect(rep.faces).toBe(12);
		expect(rep.duplicateFaces).toBe(0);
		expect(rep.degenerateFaces).toBe(0);
		expect(rep.watertight).toBe(true);
		expect(rep.volume).toBe(1); // unit cube, exact in float64
	});
});

describe('removeDegenerateAndDuplicateFaces', () => {
	it('keeps the first of three copies of a face and changes nothing else', () => {
		const c = unitCube();
		const indices = new Uint32Array(c.indices.length + 6);
		indices.set(c.indices);
		indices.set([2, 1, 0, 1, 0, 2], c.indices.length);
		const r = removeDegenerateAndDuplicateFaces({ positions: c.positions, indices });
		expect(r.counts).toEqual({ degenerateFaces: 0, duplicateFaces: 2, verticesDropped: 0 });
		expect(Array.from(r.mesh.indices)).toEqual(Array.from(c.indices));
	});
});
