import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { PLYLoader } from '@loaders.gl/ply';
import { readMesh } from './read';
import { parsePly } from './parse-ply';
import { writePly } from './write';
import { MeshReadError, type ParsedMesh } from './types';

const fixture = (name: string) => new Uint8Array(readFileSync(new URL(`../../../fixtures/${name}`, import.meta.url)));
const enc = new TextEncoder();

function expectReadError(bytes: Uint8Array, pattern: RegExp, opts = {}): void {
	let err: unknown;
	try {
		parsePly(bytes, opts);
	} catch (e) {
		err = e;
	}
	expect(err).toBeInstanceOf(MeshReadError);
	expect((err as Error).message).toMatch(pattern);
}

type T = 'char' | 'uchar' | 'short' | 'ushort' | 'int' | 'uint' | 'float' | 'double';
const SIZES: Record<T, number> = { char: 1, uchar: 1, short: 2, ushort: 2, int: 4, uint: 4, float: 4, double: 8 };

/** Binary PLY from a header and rows of [type, value] cells, in either byte order. */
function binaryPly(headerLines: string[], cells: [T, number][], le: boolean): Uint8Array {
	const h = enc.encode(['ply', `format binary_${le ? 'little' : 'big'}_endian 1.0`, ...headerLines, 'end_header', ''].join('\n'));
	const size = cells.reduce((s, [t]) => s + SIZES[t], 0);
	const out = new Uint8Array(h.length + size);
	out.set(h);
	const dv = new DataView(out.buffer);
	let o = h.length;
	for (const [t, v] of cells) {
		if (t === 'char') dv.setInt8(o, v);
		else if (t === 'uchar') dv.setUint8(o, v);
		else if (t === 'short') dv.setInt16(o, v, le);
		else if (t === 'ushort') dv.setUint16(o, v, le);
		else if (t === 'int') dv.setInt32(o, v, le);
		else if (t === 'uint') dv.setUint32(o, v, le);
		else if (t === 'float') dv.setFloat32(o, v, le);
		else dv.setFloat64(o, v, le);
		o += SIZES[t];
	}
	return out;
}

const ascii = (lines: string[]) => enc.encode(lines.join('\n') + '\n');
const triHeader = (v: number, f: number) => ['element vertex ' + v, 'property float x', 'property float y', 'property float z', 'element face ' + f, 'property list uchar int vertex_indices'];

/** loaders.gl's PLYLoader as the outside reference: positions (float32) and triangle count. */
function loadersGl(bytes: Uint8Array): { positions: Float32Array; triCount: number } {
	const m = PLYLoader.parseSync!(bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer, {}) as unknown as {
		attributes: { POSITION: { value: Float32Array } };
		indices: { value: Uint32Array };
	};
	return { positions: m.attributes.POSITION.value, triCount: m.indices.value.length / 3 };
}

const f32 = (m: ParsedMesh) => Array.from(Float32Array.from(m.positions));

describe('PLY reading', () => {
	it('fan-splits the six quads of cube-quads.ply into 12 triangles and counts 6 polygons split', () => {
		const m = readMesh(fixture('cube-quads.ply'), 'cube-quads.ply');
		expect(m.format).toBe('ply-ascii');
		expect(m.positions.length / 3).toBe(8);
		expect(m.indices.length / 3).toBe(12);
		expect(m.stats.polygonsSplit).toBe(6);
		expect(m.stats.facesDeclared).toBe(6);
		expect(Array.from(m.indices.subarray(0, 6))).toEqual([0, 3, 2, 0, 2, 1]);
	});

	it('reads big-endian binary with properties around x,y,z, ushort counts, short indices and an extra element with lists', () => {
		const m = readMesh(fixture('cube-binary-be.ply'), 'cube-binary-be.ply');
		expect(m.format).toBe('ply-binary-be');
		expect(m.indices.length / 3).toBe(12);
		expect(Array.from(m.positions)).toEqual(Array.from(readMesh(fixture('cube-quads.ply'), 'q.ply').positions));
		// Same triangles as the fan-split quads of the ASCII file.
		expect(Array.from(m.indices)).toEqual(Array.from(readMesh(fixture('cube-quads.ply'), 'q.ply').indices));
	});

	for (const name of ['cube-quads.ply', 'cube-binary-be.ply', 'cube-closed-binary-le.ply']) {
		it(`agrees with @loaders.gl/ply (outside reference) on positions and triangle count of ${name}`, () => {
			const ref = loadersGl(fixture(name));
			const m = readMesh(fixture(name), name);
			expect(f32(m)).toEqual(Array.from(ref.positions));
			expect(m.indices.length / 3).toBe(ref.triCount);
		});
	}

	it('reads every list count and index width, in both byte orders, to the same mesh', () => {
		const types: [T, T][] = [['uchar', 'int'], ['uchar', 'uint'], ['ushort', 'ushort'], ['uint', 'short'], ['int', 'uchar'], ['char', 'char'], ['short', 'int']];
		for (const le of [true, false]) {
			for (const [ct, it2] of types) {
				const cells: [T, number][] = [];
				const pos = [0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 1];
				for (let v = 0; v < 4; v++) cells.push(['double', pos[3 * v]], ['float', 9], ['double', pos[3 * v + 1]], ['double', pos[3 * v + 2]]);
				for (const f of [[0, 2, 1], [0, 1, 3], [1, 2, 3], [0, 3, 2]]) cells.push([ct, 3], ...f.map((i): [T, number] => [it2, i]));
				const m = parsePly(binaryPly(['element vertex 4', 'property double x', 'property float w', 'property double y', 'property double z',
					'element face 4', `property list ${ct} ${it2} vertex_indices`], cells, le));
				expect(Array.from(m.positions)).toEqual(pos);
				expect(Array.from(m.indices)).toEqual([0, 2, 1, 0, 1, 3, 1, 2, 3, 0, 3, 2]);
				expect(m.format).toBe(le ? 'ply-binary-le' : 'ply-binary-be');
			}
		}
	});

	it('skips a face property before the index list and a list property in the vertex element', () => {
		const cells: [T, number][] = [];
		const pos = [0, 0, 0, 1, 0, 0, 0, 1, 0];
		for (let v = 0; v < 3; v++) cells.push(['uchar', 2], ['int', 7], ['int', 8], ['float', pos[3 * v]], ['float', pos[3 * v + 1]], ['float', pos[3 * v + 2]]);
		cells.push(['int', 5], ['uchar', 3], ['int', 0], ['int', 1], ['int', 2], ['uchar', 1], ['float', 0.5]);
		const m = parsePly(binaryPly(['element vertex 3', 'property list uchar int tags', 'property float x', 'property float y', 'property float z',
			'element face 1', 'property int material', 'property list uchar int vertex_indices', 'property list uchar float texcoord'], cells, true));
		expect(Array.from(m.positions)).toEqual(pos);
		expect(Array.from(m.indices)).toEqual([0, 1, 2]);
	});

	it('counts duplicate positions without merging them (indexed formats keep their connectivity)', () => {
		const m = parsePly(ascii(['ply', 'format ascii 1.0', ...triHeader(6, 2), 'end_header', '0 0 0', '1 0 0', '0 1 0', '-0 0 0', '1 0 0', '0 0 1', '3 0 1 2', '3 3 4 5']));
		expect(m.positions.length / 3).toBe(6);
		expect(m.stats.duplicatePositions).toBe(2);
		expect(Array.from(m.indices)).toEqual([0, 1, 2, 3, 4, 5]);
	});

	it('reads ASCII rows split over lines, CRLF and comment/obj_info lines', () => {
		const m = parsePly(enc.encode('ply\r\nformat ascii 1.0\r\ncomment a\r\nobj_info b\r\n' + triHeader(3, 1).join('\r\n') + '\r\nend_header\r\n0 0\r\n0 1 0 0 0 1 0\r\n3 0\r\n1 2\r\n'));
		expect(Array.from(m.positions)).toEqual([0, 0, 0, 1, 0, 0, 0, 1, 0]);
		expect(Array.from(m.indices)).toEqual([0, 1, 2]);
	});

	it('skips an ASCII element with a list placed between vertices and faces, and reads faces before vertices', () => {
		const m = parsePly(ascii(['ply', 'format ascii 1.0', 'element vertex 3', 'property float x', 'property float y', 'property float z',
			'element material 2', 'property list uchar float rgb', 'property uchar id', 'element face 1', 'property list uchar int vertex_indices', 'end_header',
			'0 0 0', '1 0 0', '0 1 0', '3 0.1 0.2 0.3 1', '0 2', '3 0 1 2']));
		expect(Array.from(m.indices)).toEqual([0, 1, 2]);
		const first = parsePly(ascii(['ply', 'format ascii 1.0', 'element face 1', 'property list uchar int vertex_indices', ...triHeader(3, 0).slice(0, 4), 'end_header',
			'3 2 1 0', '0 0 0', '1 0 0', '0 1 0']));
		expect(Array.from(first.indices)).toEqual([2, 1, 0]);
		expect(Array.from(first.positions)).toEqual([0, 0, 0, 1, 0, 0, 0, 1, 0]);
	});

	it('round-trips writePly in all three encodings', () => {
		const mesh = { positions: new Float64Array([0.1, 0.2, 0.3, 1 / 3, -5, 1e-300, 7, 8, 9]), indices: new Uint32Array([0, 1, 2, 2, 1, 0]) };
		for (const e of ['ascii', 'binary-le', 'binary-be'] as const) {
			const m = parsePly(writePly(mesh, e));
			expect(Array.from(m.positions)).toEqual(Array.from(mesh.positions));
			expect(Array.from(m.indices)).toEqual(Array.from(mesh.indices));
		}
	});
});

describe('PLY refusals', () => {
	const head = ['ply', 'format ascii 1.0', ...triHeader(3, 1), 'end_header'];
	it('refuses an out-of-range face index, naming face and vertex count', () => {
		expectReadError(ascii([...head, '0 0 0', '1 0 0', '0 1 0', '3 0 1 3']), /face 0 \(0-based, line 13\) refers to vertex 3 but the file has 3 vertices \(0–2\)/);
		const cells: [T, number][] = [['float', 0], ['float', 0], ['float', 0], ['uchar', 3], ['int', 0], ['int', -1], ['int', 0]];
		expectReadError(binaryPly(triHeader(1, 1).slice(0), cells, true), /face 0 \(0-based\) refers to vertex -1 but the file has 1 vertices/);
	});

	it('refuses a face with fewer than 3 vertices', () => {
		expectReadError(ascii([...head, '0 0 0', '1 0 0', '0 1 0', '2 0 1']), /face 0 \(0-based, line 13\) has 2 vertices; a face needs at least 3/);
	});

	it('refuses an unsupported format line', () => {
		expectReadError(ascii(['ply', 'format binary_middle_endian 1.0', ...triHeader(3, 1), 'end_header']), /line 2: unsupported format 'binary_middle_endian'/);
	});

	it('refuses a header without end_header', () => {
		expectReadError(ascii(['ply', 'format ascii 1.0', ...triHeader(3, 1)]), /without an 'end_header' line/);
	});

	it('refuses float vertex indices clearly', () => {
		expectReadError(ascii(['ply', 'format ascii 1.0', 'element vertex 3', 'property float x', 'property float y', 'property float z', 'element face 1', 'property list uchar float vertex_indices', 'end_header']),
			/item type float; vertex indices must be an integer type/);
	});

	it('refuses a header declaring 2^31 vertices at once', () => {
		expectReadError(ascii(['ply', 'format binary_little_endian 1.0', ...triHeader(2 ** 31, 1).slice(0), 'end_header', 'xx']), /declares 2,147,483,648 'vertex' entries \(at least 25,769,803,776 bytes\) but only 3 bytes follow/);
	});

	it('refuses a face count above maxFaces before allocating', () => {
		expectReadError(ascii(['ply', 'format ascii 1.0', ...triHeader(3, 5_000_000), 'end_header']), /declares 5,000,000 faces\) holds more than 1,000,000 triangles/, { maxFaces: 1_000_000 });
	});

	it('refuses truncated binary data, naming the element and entry', () => {
		const full = fixture('cube-closed-binary-le.ply');
		expectReadError(full.slice(0, full.length - 20), /ends inside 'face' entry 10 of 12: the file is truncated/);
	});

	it('refuses truncated ASCII data and NaN coordinates, naming the line', () => {
		expectReadError(ascii([...head, '0.000000 0.000000 0.000000', '1.000000 0.000000 0.000000']), /data ends at line 12 inside 'vertex' entry 2 of 3/);
		expectReadError(ascii([...head, '0 0 0', '1 nan 0', '0 1 0', '3 0 1 2']), /line 11: vertex 1 \(0-based\) has a non-finite y coordinate 'nan'/);
	});

	it('refuses NaN in binary vertices, naming the vertex', () => {
		const cells: [T, number][] = [['float', 0], ['float', 0], ['float', 0], ['float', 1], ['float', 0], ['float', Infinity], ['float', 0], ['float', 1], ['float', 0], ['uchar', 3], ['int', 0], ['int', 1], ['int', 2]];
		expectReadError(binaryPly(triHeader(3, 1), cells, false), /vertex 1 \(0-based\) has a non-finite z coordinate \(Infinity\)/);
	});

	it('refuses an empty file, a non-PLY first line, a missing face element and an absurdly long header line', () => {
		expectReadError(new Uint8Array(0), /empty/);
		expectReadError(ascii(['solid x']), /not a PLY file/);
		expectReadError(ascii(['ply', 'format ascii 1.0', 'element vertex 1', 'property float x', 'property float y', 'property float z', 'end_header', '0 0 0']), /no faces/);
		expectReadError(ascii(['ply', 'comment ' + 'x'.repeat(70_000)]), /line 2 is longer than 65,536 bytes/);
	});

	it('refuses an unknown header keyword and a vertex element without z', () => {
		expectReadError(ascii(['ply', 'format ascii 1.0', 'elephant 3']), /line 3: unknown keyword 'elephant'/);
		expectReadError(ascii(['ply', 'format ascii 1.0', 'element vertex 1', 'property float x', 'property float y', 'element face 1', 'property list uchar int vertex_indices', 'end_header']), /no 'z' property/);
	});
});
