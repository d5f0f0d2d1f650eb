import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { STLLoader } from 'three/examples/jsm/loaders/STLLoader.js';
import { readMesh } from './read';
import { parseStl } from './parse-stl';
import { writeAsciiStl, writeBinaryStl } from './write';
import { MeshReadError, type ParsedMesh } from './types';

const fixture = (name: string) => new Uint8Array(readFileSync(new URL(`../../../fixtures/${name}`, import.meta.url)));
const enc = new TextEncoder();
const text = (s: string) => enc.encode(s);

/** Corner positions of our mesh, as float32, in triangle order (what three's STLLoader returns). */
function corners32(m: ParsedMesh): Float32Array {
	const out = new Float32Array(3 * m.indices.length);
	for (let c = 0; c < m.indices.length; c++) out.set(m.positions.subarray(3 * m.indices[c], 3 * m.indices[c] + 3), 3 * c);
	return out;
}

function expectReadError(bytes: Uint8Array, pattern: RegExp, opts = {}): void {
	let err: unknown;
	try {
		parseStl(bytes, opts);
	} catch (e) {
		err = e;
	}
	expect(err).toBeInstanceOf(MeshReadError);
	expect((err as Error).message).toMatch(pattern);
}

const tri = (a: string, b: string, c: string) =>
	`facet normal 0 0 1\n outer loop\n  vertex ${a}\n  vertex ${b}\n  vertex ${c}\n endloop\nendfacet\n`;

describe('binary STL', () => {
	it('reads the closed cube as 8 vertices and 12 triangles, welding 28 corner records, although its header starts with "solid"', () => {
		const bytes = fixture('cube-closed.stl');
		expect(new TextDecoder().decode(bytes.subarray(0, 5))).toBe('solid');
		const m = readMesh(bytes, 'cube-closed.stl');
		expect(m.format).toBe('stl-binary');
		expect(m.positions.length / 3).toBe(8);
		expect(m.indices.length / 3).toBe(12);
		expect(m.stats.weldedVertices).toBe(28);
		expect(m.stats.facesDeclared).toBe(12);
		expect(m.regions).toEqual([{ name: 'default', firstFace: 0, faceCount: 12 }]);
	});

	it('reads the cube with one side missing as 10 triangles on the same 8 vertices', () => {
		const m = readMesh(fixture('cube-one-face-missing.stl'), 'CUBE-ONE-FACE-MISSING.STL');
		expect(m.indices.length / 3).toBe(10);
		expect(m.positions.length / 3).toBe(8);
		expect(m.stats.weldedVertices).toBe(22);
	});

	it("gives the same corner positions as three's STLLoader (outside reference) on the binary cube", () => {
		const bytes = fixture('cube-closed.stl');
		const geo = new STLLoader().parse(bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer);
		const m = readMesh(bytes, 'cube.stl');
		expect(Array.from(corners32(m))).toEqual(Array.from(geo.getAttribute('position').array as Float32Array));
	});

	it('welds -0 with +0', () => {
		const positions = new Float64Array([0, 0, 0, 1, 0, 0, 0, 1, 0, -0, -0, -0]);
		const m = parseStl(writeBinaryStl({ positions, indices: new Uint32Array([0, 1, 2, 3, 2, 1]) }));
		expect(m.positions.length / 3).toBe(3);
		expect(m.stats.weldedVertices).toBe(3);
	});

	it('reads odd triangle counts (records alternate 4-byte alignment) and a buffer at an odd byte offset', () => {
		const positions = new Float64Array([0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 1, 0.5, 0.25, -3]);
		const indices = new Uint32Array([0, 1, 2, 0, 3, 1, 4, 2, 1]);
		const file = writeBinaryStl({ positions, indices });
		const shifted = new Uint8Array(file.length + 1).subarray(1);
		shifted.set(file);
		for (const bytes of [file, shifted, file.slice(0, 84 + 50)]) {
			const m = parseStl(bytes.length === 134 ? (() => { const b = bytes.slice(); new DataView(b.buffer).setUint32(80, 1, true); return b; })() : bytes);
			const triCount = m.indices.length / 3;
			for (let c = 0; c < 3 * triCount; c++) {
				expect(Array.from(m.positions.subarray(3 * m.indices[c], 3 * m.indices[c] + 3))).toEqual(Array.from(positions.subarray(3 * indices[c], 3 * indices[c] + 3)));
			}
		}
	});

	it('refuses a truncated file, giving declared and held sizes', () => {
		const bytes = fixture('cube-closed.stl').slice(0, 84 + 50 * 7 + 20);
		expectReadError(bytes, /declares 12 triangles \(684 bytes\) but the file holds 454 bytes \(room for 7 triangles and a partial one\)/);
	});

	it('refuses a count larger than the data at once, with thousands separators', () => {
		const bytes = fixture('cube-closed.stl').slice();
		new DataView(bytes.buffer).setUint32(80, 2 ** 31, true);
		expectReadError(bytes, /declares 2,147,483,648 triangles/);
	});

	it('refuses random bytes', () => {
		let s = 12345;
		const bytes = new Uint8Array(5000).map(() => ((s = (s * 1103515245 + 12345) >>> 0) >>> 24));
		expectReadError(bytes, /binary STL declares .* but the file holds 5,000 bytes/);
	});

	it('refuses an empty file and a file shorter than a header', () => {
		expectReadError(new Uint8Array(0), /empty/);
		expectReadError(new Uint8Array(30), /only 30 bytes/);
	});

	it('refuses a NaN coordinate, naming the triangle and corner', () => {
		const bytes = fixture('cube-closed.stl').slice();
		new DataView(bytes.buffer).setFloat32(84 + 50 * 5 + 12 + 12 + 4, NaN, true);
		expectReadError(bytes, /triangle 5 \(0-based\), corner 1, has a non-finite coordinate \(NaN\)/);
	});

	it('refuses more triangles than maxFaces before reading them', () => {
		expectReadError(fixture('cube-closed.stl'), /more than 10 triangles/, { maxFaces: 10 });
	});

	it('refuses zero triangles', () => {
		const b = new Uint8Array(84);
		expectReadError(b, /0 triangles/);
	});
});

describe('ASCII STL', () => {
	it('reads the ASCII cube like the binary one', () => {
		const a = readMesh(fixture('cube-closed-ascii.stl'), 'cube.stl');
		const b = readMesh(fixture('cube-closed.stl'), 'cube.stl');
		expect(a.format).toBe('stl-ascii');
		expect(Array.from(a.positions)).toEqual(Array.from(b.positions));
		expect(Array.from(a.indices)).toEqual(Array.from(b.indices));
		expect(a.stats.weldedVertices).toBe(28);
	});

	it("gives the same corner positions as three's STLLoader (outside reference) on the ASCII cube", () => {
		const bytes = fixture('cube-closed-ascii.stl');
		const geo = new STLLoader().parse(bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer);
		expect(Array.from(corners32(readMesh(bytes, 'c.stl')))).toEqual(Array.from(geo.getAttribute('position').array as Float32Array));
	});

	it('makes one region per solid of a multi-solid file', () => {
		const m = readMesh(fixture('cube-two-solids-ascii.stl'), 'c.stl');
		expect(m.regions).toEqual([
			{ name: 'lid', firstFace: 0, faceCount: 4 },
			{ name: 'walls', firstFace: 4, faceCount: 8 }
		]);
		expect(m.positions.length / 3).toBe(8);
	});

	it('accepts upper-case keywords, CRLF line ends, exponents and NaN facet normals', () => {
		const s = 'SOLID pod\r\n  FACET NORMAL nan nan nan\r\n OUTER LOOP\r\nVERTEX 0 0 0\r\nvertex 1e0 0 0\r\nvertex 0 1.0E+00 -0\r\nENDLOOP\r\nENDFACET\r\nENDSOLID pod\r\n';
		const m = parseStl(text(s));
		expect(m.indices.length).toBe(3);
		expect(Array.from(m.positions)).toEqual([0, 0, 0, 1, 0, 0, 0, 1, 0]);
		expect(m.regions[0].name).toBe('pod');
	});

	it('fan-splits a facet with four vertices and counts it', () => {
		const s = 'solid q\nfacet normal 0 0 1\nouter loop\nvertex 0 0 0\nvertex 1 0 0\nvertex 1 1 0\nvertex 0 1 0\nendloop\nendfacet\nendsolid q\n';
		const m = parseStl(text(s));
		expect(Array.from(m.indices)).toEqual([0, 1, 2, 0, 2, 3]);
		expect(m.stats.polygonsSplit).toBe(1);
	});

	it('refuses a facet without endloop, naming the line', () => {
		const s = `solid x\n${tri('0 0 0', '1 0 0', '0 1 0').replace(' endloop\n', '')}endsolid x\n`;
		expectReadError(text(s), /line 7: expected 'vertex' or 'endloop', found 'endfacet'/);
	});

	it('refuses a facet without endfacet', () => {
		const s = `solid x\n${tri('0 0 0', '1 0 0', '0 1 0').replace('endfacet\n', '')}endsolid x\n`;
		expectReadError(text(s), /line 8: expected 'endfacet', found 'endsolid'/);
	});

	it('refuses a file that ends inside a solid', () => {
		expectReadError(text(`solid x\n${tri('0 0 0', '1 0 0', '0 1 0')}`), /ends inside solid 'x' \(opened at line 1\): 'endsolid' is missing/);
	});

	it('refuses NaN and infinite coordinates, naming the line', () => {
		expectReadError(text(`solid x\n${tri('0 0 0', '1 nan 0', '0 1 0')}endsolid\n`), /line 5: vertex has a non-finite coordinate 'nan'/);
		expectReadError(text(`solid x\n${tri('0 0 0', '1 0 0', '0 1e999 0')}endsolid\n`), /line 6: vertex has a non-finite coordinate '1e999'/);
	});

	it('refuses a vertex with two coordinates and text in place of a number', () => {
		expectReadError(text(`solid x\n${tri('0 0', '1 0 0', '0 1 0')}endsolid\n`), /line 4: vertex needs three coordinates/);
		expectReadError(text(`solid x\n${tri('0 0 a', '1 0 0', '0 1 0')}endsolid\n`), /line 4: expected a coordinate, found 'a'/);
	});

	it('refuses a facet with two vertices', () => {
		const s = 'solid x\nfacet normal 0 0 1\nouter loop\nvertex 0 0 0\nvertex 1 0 0\nendloop\nendfacet\nendsolid\n';
		expectReadError(text(s), /facet at line 3 has 2 vertices; a facet needs at least 3/);
	});

	it('refuses an absurdly long line', () => {
		expectReadError(text('solid ' + 'x'.repeat(100_000) + '\n'), /line 1 is longer than 65,536 bytes/);
	});

	it('refuses more facets than maxFaces while reading', () => {
		const s = `solid x\n${tri('0 0 0', '1 0 0', '0 1 0').repeat(5)}endsolid\n`;
		expectReadError(text(s), /more than 3 triangles/, { maxFaces: 3 });
	});

	it('refuses a solid without facets', () => {
		expectReadError(text('solid empty\nendsolid empty\n'), /no facets/);
	});

	it('round-trips a mesh through writeAsciiStl with exact float64 coordinates', () => {
		const positions = new Float64Array([0.1, 0.2, 0.3, 1 / 3, 2e-310, 5, -7.25, 1e21, 0]);
		const m = parseStl(writeAsciiStl({ positions, indices: new Uint32Array([0, 1, 2]) }));
		expect(Array.from(m.positions)).toEqual(Array.from(positions));
	});
});
