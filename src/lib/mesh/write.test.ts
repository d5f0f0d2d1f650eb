import { describe, expect, it } from 'vitest';
import { readMesh } from './read';
import { writeAsciiStl, writeBinaryStl, writeObj, writePly } from './write';

// Right triangle in the z=0 plane, CCW seen from +z, plus one below it: unit normals (0,0,±1).
const mesh = {
	positions: new Float64Array([0, 0, 0, 2, 0, 0, 0, 2, 0, 0, 0, -1]),
	indices: new Uint32Array([0, 1, 2, 0, 2, 1])
};

describe('mesh writers', () => {
	it('writes binary STL of 84 + 50·n bytes with unit facet normals and a header not starting with "solid"', () => {
		const b = writeBinaryStl(mesh);
		expect(b.length).toBe(84 + 50 * 2);
		const dv = new DataView(b.buffer);
		expect(dv.getUint32(80, true)).toBe(2);
		expect([dv.getFloat32(84, true), dv.getFloat32(88, true), dv.getFloat32(92, true)]).toEqual([0, 0, 1]);
		expect([dv.getFloat32(134, true), dv.getFloat32(138, true), dv.getFloat32(142, true)]).toEqual([0, 0, -1]);
		expect(new TextDecoder().decode(b.subarray(0, 5))).not.toBe('solid');
	});

	it('cuts a long binary STL header to 80 bytes', () => {
		const b = writeBinaryStl(mesh, 'x'.repeat(200));
		expect(new DataView(b.buffer).getUint32(80, true)).toBe(2);
	});

	it('writes one solid per region in ASCII STL, and readMesh gets the regions back', () => {
		const regions = [{ name: 'top', firstFace: 0, faceCount: 1 }, { name: 'under', firstFace: 1, faceCount: 1 }];
		const m = readMesh(writeAsciiStl(mesh, regions), 'r.stl');
		expect(m.regions).toEqual(regions);
	});

	it('round-trips PLY and OBJ with identical indices (no welding in indexed formats)', () => {
		for (const [b, name] of [[writePly(mesh, 'ascii'), 'a.ply'], [writePly(mesh, 'binary-be'), 'b.ply'], [writeObj(mesh), 'c.obj']] as const) {
			const m = readMesh(b, name);
			expect(Array.from(m.indices)).toEqual(Array.from(mesh.indices));
			expect(Array.from(m.positions)).toEqual(Array.from(mesh.positions));
		}
	});
});
