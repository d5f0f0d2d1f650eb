import { describe, expect, it } from 'vitest';
import { clearVertices, vertexFaces } from './vertex-fans';
import { icosphere } from './testing/test-meshes';
import type { MeshBuffers } from './types';

function mesh(points: number[][], tris: number[][]): MeshBuffers {
	return { positions: Float64Array.from(points.flat()), indices: Uint32Array.from(tris.flat()) };
}

function clearOf(m: MeshBuffers, live?: Uint8Array): Uint8Array {
	const n = m.indices.length / 3, vc = m.positions.length / 3;
	const start = new Uint32Array(vc + 1), faces = new Uint32Array(3 * n);
	vertexFaces(m.indices, vc, live ?? new Uint8Array(n).fill(1), start, faces);
	const clear = new Uint8Array(vc);
	clearVertices(m.positions, m.indices, start, faces, 0, vc, clear);
	return clear;
}

/** A fan of k faces around vertex 0 at height hub, link points at the given angles (turns) and heights. */
function fan(k: number, turns: number, hub = 0, z = (t: number) => 0): MeshBuffers {
	const pts = [[0, 0, hub]];
	for (let t = 0; t < k; t++) {
		const a = (2 * Math.PI * turns * t) / k;
		pts.push([Math.cos(a), Math.sin(a), z(t)]);
	}
	const tris: number[][] = [];
	for (let t = 0; t < k; t++) tris.push([0, 1 + t, 1 + ((t + 1) % k)]);
	return mesh(pts, tris);
}

describe('vertexFaces', () => {
	it('lists each live face once under each of its corners, in face order', () => {
		const m = mesh([[0, 0, 0], [1, 0, 0], [0, 1, 0], [1, 1, 0]], [[0, 1, 2], [1, 3, 2], [0, 3, 1]]);
		const start = new Uint32Array(5), faces = new Uint32Array(9);
		vertexFaces(m.indices, 4, Uint8Array.from([1, 1, 0]), start, faces);
		expect([...start]).toEqual([0, 1, 3, 5, 6]);
		expect([...faces.subarray(0, 6)]).toEqual([0, 0, 1, 0, 1, 1]);
	});
});

describe('clearVertices', () => {
	it('clears the hub of a flat or a bumpy closed fan, and every vertex of a closed sphere', () => {
		expect(clearOf(fan(6, 1))[0]).toBe(1);
		expect(clearOf(fan(9, 1, 0.5, (t) => (t % 2 ? 0.3 : -0.2)))[0]).toBe(1);
		expect(clearOf(icosphere(2)).every((c) => c === 1)).toBe(true);
	});

	it('does not clear a hub whose link winds twice, an open fan, or a fan with a face left out', () => {
		expect(clearOf(fan(7, 2))[0]).toBe(0);
		const open = fan(6, 1);
		expect(clearOf({ positions: open.positions, indices: open.indices.subarray(0, 15) })[0]).toBe(0);
		expect(clearOf(open, Uint8Array.from([1, 1, 0, 1, 1, 1]))[0]).toBe(0);
		// Link vertices of an open fan have open fans themselves.
		expect([...clearOf(open).subarray(1)].every((c) => c === 0)).toBe(true);
	});

	it('does not clear a vertex where two fans meet (a pinch) or a fan folded over in every projection', () => {
		const a = fan(5, 1), n = a.positions.length / 3;
		// Second fan on the same hub, lifted: vertex 0 has ten faces and a link of two cycles.
		const positions = Float64Array.from([...a.positions, ...[...a.positions.subarray(3)].map((x, i) => (i % 3 === 2 ? x + 1 : x))]);
		const indices = Uint32Array.from([...a.indices, ...[...a.indices].map((v) => (v === 0 ? 0 : v + n - 1))]);
		expect(clearOf({ positions, indices })[0]).toBe(0);
		// One link point pulled across the hub: a wedge turns the other way.
		const folded = fan(6, 1);
		folded.positions[3 * 2] = -0.2;
		folded.positions[3 * 2 + 1] = -0.1;
		expect(clearOf(folded)[0]).toBe(0);
	});
});
