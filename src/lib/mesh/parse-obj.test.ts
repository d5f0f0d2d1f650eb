import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { OBJLoader } from 'three/examples/jsm/loaders/OBJLoader.js';
import type { BufferGeometry, Mesh } from 'three';
import { readMesh } from './read';
import { parseObj } from './parse-obj';
import { writeObj } from './write';
import { MeshReadError } from './types';

const fixture = (name: string) => new Uint8Array(readFileSync(new URL(`../../../fixtures/${name}`, import.meta.url)));
const obj = (lines: string[]) => new TextEncoder().encode(lines.join('\n') + '\n');
const tri = ['v 0 0 0', 'v 1 0 0', 'v 0 1 0'];

function expectReadError(bytes: Uint8Array, pattern: RegExp, opts = {}): void {
	let err: unknown;
	try {
		parseObj(bytes, opts);
	} catch (e) {
		err = e;
	}
	expect(err).toBeInstanceOf(MeshReadError);
	expect((err as Error).message).toMatch(pattern);
}

describe('OBJ reading', () => {
	it('keeps o/g names as contiguous regions, fan-splits quads and counts skipped statements', () => {
		const m = readMesh(fixture('cube-regions.obj'), 'cube-regions.OBJ');
		expect(m.format).toBe('obj');
		expect(m.positions.length / 3).toBe(8);
		expect(m.indices.length / 3).toBe(12);
		expect(m.regions).toEqual([
			{ name: 'lid', firstFace: 0, faceCount: 4 },
			{ name: 'walls-y', firstFace: 4, faceCount: 4 },
			{ name: 'walls-x', firstFace: 8, faceCount: 4 }
		]);
		expect(m.stats.polygonsSplit).toBe(6);
		expect(m.stats.facesDeclared).toBe(6);
		expect(m.stats.skippedStatements).toBe(7); // mtllib, 3 vt, vn, s, usemtl
	});

	it('resolves v, v/vt, v//vn, v/vt/vn and negative indices to the same triangles, with the same winding, as the binary STL cube', () => {
		const m = readMesh(fixture('cube-regions.obj'), 'c.obj');
		const stl = readMesh(fixture('cube-closed.stl'), 'c.stl');
		// Vertex numbering and side order differ, so compare the sets of triangles by corner positions.
		const tris = (x: typeof m) =>
			Array.from({ length: x.indices.length / 3 }, (_, t) =>
				[0, 1, 2].map((k) => Array.from(x.positions.subarray(3 * x.indices[3 * t + k], 3 * x.indices[3 * t + k] + 3)).join(' ')).join(' | ')
			).sort();
		expect(tris(m)).toEqual(tris(stl));
	});

	it("agrees with three's OBJLoader (outside reference) on triangle count and corner positions of tow-body-hole.obj", () => {
		const bytes = fixture('tow-body-hole.obj');
		const group = new OBJLoader().parse(new TextDecoder().decode(bytes));
		const ref: number[] = [];
		for (const child of group.children) ref.push(...(((child as Mesh).geometry as BufferGeometry).getAttribute('position').array as Float32Array));
		const m = readMesh(bytes, 'tow-body-hole.obj');
		expect(m.indices.length / 3).toBe(ref.length / 9);
		const ours: number[] = [];
		for (const c of m.indices) ours.push(...Float32Array.from(m.positions.subarray(3 * c, 3 * c + 3)));
		expect(ours).toEqual(ref);
		expect(m.regions.map((r) => r.name)).toEqual(['hull', 'end-caps']);
		expect(m.indices.length / 3).toBe(94);
	});

	it('counts 16 duplicate positions in a cube whose sides each have their own four vertices', () => {
		const m = readMesh(fixture('cube-unwelded-sides.obj'), 'c.obj');
		expect(m.positions.length / 3).toBe(24);
		expect(m.stats.duplicatePositions).toBe(16);
		expect(m.stats.weldedVertices).toBe(0);
	});

	it('fan-splits the pentagon prism into 16 triangles, 7 polygons split', () => {
		const m = readMesh(fixture('pentagon-prism.obj'), 'p.obj');
		expect(m.indices.length / 3).toBe(16);
		expect(m.stats.polygonsSplit).toBe(7);
		expect(Array.from(m.indices.subarray(0, 9))).toEqual([4, 3, 2, 4, 2, 1, 4, 1, 0]);
	});

	it('names faces before any o/g "default" and drops empty groups', () => {
		const m = parseObj(obj([...tri, 'v 0 0 1', 'f 1 2 3', 'g empty', 'o body', 'f 1 3 4']));
		expect(m.regions).toEqual([
			{ name: 'default', firstFace: 0, faceCount: 1 },
			{ name: 'body', firstFace: 1, faceCount: 1 }
		]);
	});

	it('accepts CRLF, tabs, a BOM, extra vertex values (w, colours) and forward references', () => {
		const b = new TextEncoder().encode('\ufefff 1 2 3\r\nv\t0 0 0 1\r\nv 1 0 0 0.5 0.5 0.5\r\nv 0 1 0\r\n');
		const m = parseObj(b);
		expect(Array.from(m.indices)).toEqual([0, 1, 2]);
		expect(Array.from(m.positions)).toEqual([0, 0, 0, 1, 0, 0, 0, 1, 0]);
	});

	it('round-trips writeObj with regions', () => {
		const mesh = { positions: new Float64Array([0.1, 0.2, 0.3, 1 / 3, -5, 1e-300, 7, 8, 9, 1, 1, 1]), indices: new Uint32Array([0, 1, 2, 2, 1, 3]) };
		const regions = [{ name: 'fin', firstFace: 0, faceCount: 1 }, { name: 'bulb', firstFace: 1, faceCount: 1 }];
		const m = parseObj(writeObj(mesh, regions));
		expect(Array.from(m.positions)).toEqual(Array.from(mesh.positions));
		expect(Array.from(m.indices)).toEqual(Array.from(mesh.indices));
		expect(m.regions).toEqual(regions);
	});
});

describe('OBJ refusals', () => {
	it('refuses a face index past the last vertex, naming the line and counts', () => {
		const lines = [...tri, ...Array.from({ length: 8996 }, (_, i) => `v ${i} 1 1`)];
		const faces = Array.from({ length: 8 }, () => 'f 1 2 3');
		const all = [...lines, ...faces, 'f 1 2 9001'];
		expectReadError(obj(all), new RegExp(`line ${(all.length).toLocaleString('en-US')}: face refers to vertex 9,001 of 8,999`));
		expectReadError(obj([...tri, 'f 1 2 3', 'f 1 2 4']), /^OBJ line 5: face refers to vertex 4 of 3$/);
	});

	it('refuses index 0 and a relative index before the first vertex', () => {
		expectReadError(obj([...tri, 'f 0 1 2']), /line 4: face refers to vertex 0, but OBJ vertex numbers start at 1/);
		expectReadError(obj([...tri, 'f -1 -2 -4']), /line 4: relative face index -4 reaches before the first vertex \(3 defined so far\)/);
	});

	it('refuses a face with fewer than 3 vertices and a malformed face vertex', () => {
		expectReadError(obj([...tri, 'f 1 2']), /line 4: face has 2 vertices; a face needs at least 3/);
		expectReadError(obj([...tri, 'f 1 2 x3']), /line 4: bad face vertex 'x3'/);
	});

	it('refuses NaN and infinite coordinates, naming line and vertex', () => {
		expectReadError(obj(['v 0 0 0', 'v 1 NaN 0', 'v 0 1 0', 'f 1 2 3']), /line 2: vertex 2 has a non-finite y coordinate 'NaN'/);
		expectReadError(obj(['v 0 0 0', 'v 1 0 -inf', 'v 0 1 0', 'f 1 2 3']), /line 2: vertex 2 has a non-finite z coordinate '-inf'/);
		expectReadError(obj(['v 0 0', 'f 1 1 1']), /line 1: vertex needs three coordinates/);
	});

	it('refuses an empty file, a file without faces and an absurdly long line', () => {
		expectReadError(new Uint8Array(0), /empty/);
		expectReadError(obj(tri), /holds no faces/);
		expectReadError(obj(['# ' + 'x'.repeat(70_000)]), /line 1 is longer than 65,536 bytes/);
	});

	it('refuses more triangles than maxFaces while reading', () => {
		expectReadError(obj([...tri, 'f 1 2 3', 'f 1 2 3', 'f 1 2 3']), /more than 2 triangles/, { maxFaces: 2 });
	});
});
