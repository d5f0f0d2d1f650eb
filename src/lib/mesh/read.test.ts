import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { readMesh, sniffFormat } from './read';
import { writeAsciiStl, writeBinaryStl, writeObj, writePly } from './write';
import { MeshReadError } from './types';

const fixture = (name: string) => new Uint8Array(readFileSync(new URL(`../../../fixtures/${name}`, import.meta.url)));

describe('readMesh', () => {
	it('picks the reader by extension, case-insensitively', () => {
		expect(readMesh(fixture('cube-closed.stl'), 'Pod.STL').format).toBe('stl-binary');
		expect(readMesh(fixture('cube-quads.ply'), 'dir.v2/pod.Ply').format).toBe('ply-ascii');
		expect(readMesh(fixture('cube-regions.obj'), 'POD.OBJ').format).toBe('obj');
	});

	it('sniffs the content when the extension is missing or unknown', () => {
		expect(readMesh(fixture('cube-closed.stl'), 'upload').format).toBe('stl-binary');
		expect(readMesh(fixture('cube-closed-ascii.stl'), 'upload.bin').format).toBe('stl-ascii');
		expect(readMesh(fixture('cube-binary-be.ply'), 'upload.dat').format).toBe('ply-binary-be');
		expect(readMesh(fixture('tow-body-hole.obj'), 'tow-body').format).toBe('obj');
		expect(sniffFormat(new TextEncoder().encode('hello world'))).toBeNull();
	});

	it('says which format the content looks like when the extension is wrong', () => {
		expect(() => readMesh(fixture('cube-regions.obj'), 'pod.stl')).toThrow(/\(the content looks like OBJ, not STL\)$/);
		expect(() => readMesh(fixture('cube-quads.ply'), 'pod.obj')).toThrow(/looks like PLY, not OBJ/);
	});

	it('refuses an unknown format and an empty file with the file name', () => {
		expect(() => readMesh(new TextEncoder().encode('hello world\n'), 'notes.txt')).toThrow(/cannot tell the format of 'notes.txt'/);
		expect(() => readMesh(new Uint8Array(0), 'x')).toThrow(/'x' is empty/);
		expect(() => readMesh(new Uint8Array(0), 'x.stl')).toThrow(MeshReadError);
	});

	it('round-trips a tow-body mesh through every writer with identical connectivity', () => {
		const src = readMesh(fixture('tow-body-hole.obj'), 't.obj');
		const f32 = Float64Array.from(Float32Array.from(src.positions));
		const mesh = { positions: f32, indices: src.indices };
		const outputs: [Uint8Array, string][] = [
			[writeBinaryStl(mesh), 't.stl'], [writeAsciiStl(mesh), 't.stl'], [writePly(mesh, 'ascii'), 't.ply'],
			[writePly(mesh, 'binary-le'), 't.ply'], [writePly(mesh, 'binary-be'), 't.ply'], [writeObj(mesh, src.regions), 't.obj']
		];
		for (const [bytes, name] of outputs) {
			const m = readMesh(bytes, name);
			expect(m.indices.length).toBe(src.indices.length);
			// STL renumbers vertices by first appearance, so compare the positions at every 7th corner.
			for (let c = 0; c < m.indices.length; c += 7) {
				expect(Array.from(m.positions.subarray(3 * m.indices[c], 3 * m.indices[c] + 3))).toEqual(Array.from(f32.subarray(3 * src.indices[c], 3 * src.indices[c] + 3)));
			}
		}
	});

	it('throws only MeshReadError on random bytes and on mutated fixtures, for every reader (fast-check, seed 42)', () => {
		const names = ['cube-closed.stl', 'cube-closed-ascii.stl', 'cube-quads.ply', 'cube-binary-be.ply', 'cube-regions.obj'];
		const bases = names.map(fixture);
		fc.assert(
			fc.property(
				fc.integer({ min: 0, max: names.length - 1 }),
				fc.array(fc.tuple(fc.nat(), fc.integer({ min: 0, max: 255 })), { maxLength: 6 }),
				fc.nat(),
				fc.constantFrom('x.stl', 'x.ply', 'x.obj', 'x'),
				(which, edits, cut, name) => {
					const b = bases[which].slice(0, bases[which].length - (cut % 40));
					for (const [at, v] of edits) if (b.length) b[at % b.length] = v;
					try {
						readMesh(b, name);
					} catch (e) {
						if (!(e instanceof MeshReadError)) throw e;
					}
				}
			),
			{ seed: 42, numRuns: 600 }
		);
		fc.assert(
			fc.property(fc.uint8Array({ maxLength: 300 }), fc.constantFrom('x.stl', 'x.ply', 'x.obj', 'x'), (b, name) => {
				try {
					readMesh(b, name);
				} catch (e) {
					if (!(e instanceof MeshReadError)) throw e;
				}
			}),
			{ seed: 42, numRuns: 600 }
		);
	});
});
