import { describe, expect, it } from 'vitest';
import { inspectBytes, inspectMesh } from './inspect';
import { MeshReadError } from './types';
import { writeAsciiStl, writeBinaryStl, writeObj, writePly } from './write';
import type { MeshBuffers } from './types';
import type { InspectionReport } from './report-types';
import { asParsed, concat, flipFaces, mobiusStrip, unitCube, weldExact, withoutFaces } from './testing/test-meshes';
import { expectClose } from './testing/test-close';

// Every defect is written in every format and read back, so readers, weld and analysis agree.
const FORMATS: [string, (m: MeshBuffers) => Uint8Array][] = [
	['binary STL', (m) => writeBinaryStl(m)],
	['ASCII STL', (m) => writeAsciiStl(m)],
	['ASCII PLY', (m) => writePly(m, 'ascii')],
	['binary LE PLY', (m) => writePly(m, 'binary-le')],
	['binary BE PLY', (m) => writePly(m, 'binary-be')],
	['OBJ', (m) => writeObj(m)]
];
const EXT: Record<string, string> = { 'binary STL': 'stl', 'ASCII STL': 'stl', 'ASCII PLY': 'ply', 'binary LE PLY': 'ply', 'binary BE PLY': 'ply', OBJ: 'obj' };

function inspectAs(format: string, mesh: MeshBuffers): InspectionReport {
	const write = FORMATS.find((f) => f[0] === format)![1];
	return inspectBytes(write(mesh), `case.${EXT[format]}`);
}

const cube = unitCube();
// Vertex 8 on the middle of edge 0–1: a collinear (zero-area, distinct-index) face.
const cubeWithDegenerate: MeshBuffers = {
	positions: Float64Array.from([...cube.positions, 0.5, 0, 0]),
	indices: Uint32Array.from([...cube.indices, 0, 8, 1])
};
// Face 0 is (0, 2, 1), face 2 is (4, 5, 6): they share no vertex.
const twoHoles = withoutFaces(cube, [0, 2]);
// Faces 0 (0, 2, 1) and 5 (1, 5, 4) share only vertex 1.
const holesAtOneCorner = withoutFaces(cube, [0, 5]);

describe.each(FORMATS.map((f) => f[0]))('inspection after a %s round trip', (format) => {
	it('reports a closed unit cube as watertight, genus 0, area 6, volume 1', () => {
		const r = inspectAs(format, cube);
		expect(r.watertight).toBe(true);
		expect(r.boundaryEdges).toBe(0);
		expect(r.boundaryLoops).toBe(0);
		expect(r.genus).toBe(0);
		expect(r.eulerCharacteristic).toBe(2);
		expect(r.edges).toBe(18);
		expect(r.selfIntersectingPairs).toBe(0);
		expectClose(r.area, 6, 1e-12, 'area');
		expectClose(r.volume!, 1, 1e-12, 'volume');
		expectClose(r.wettedArea!, 6, 1e-12, 'wetted area');
		expect(r.volumeUndefinedReason).toBeNull();
	});

	it('reports one boundary loop of three edges for a cube with a face removed', () => {
		const r = inspectAs(format, withoutFaces(cube, [0]));
		expect(r.watertight).toBe(false);
		expect(r.boundaryEdges).toBe(3);
		expect(r.boundaryLoops).toBe(1);
		expect(r.holes[0].edgeCount).toBe(3);
		expectClose(r.holes[0].perimeter, 2 + Math.SQRT2, 1e-12, 'perimeter');
		expect(r.holes[0].onBboxPlane).toBe('z-min');
		expect(r.genus).toBe(0);
		expect(r.volume).toBeNull();
		expect(r.wettedArea).toBeNull();
		expect(r.volumeUndefinedReason).toBe('open');
		expect(r.shells[0].volume).toBeNull();
	});

	it('counts two boundary loops for two separate holes', () => {
		const r = inspectAs(format, twoHoles);
		expect(r.boundaryEdges).toBe(6);
		expect(r.boundaryLoops).toBe(2);
		// Euler–Poincaré with boundary: χ = 2 − 2g − b → 0 = 2 − 0 − 2.
		expect(r.eulerCharacteristic).toBe(0);
		expect(r.genus).toBe(0);
	});

	it('walks one loop through both wedges where two removed faces touch at a corner', () => {
		// The opening is bowtie-shaped: with the pinch vertex split per wedge (fan), its rim is one
		// closed curve of 6 edges, and V − E + F = 8 − 18 + 10 = 0 → 1 with the vertex split → b = 1.
		const r = inspectAs(format, holesAtOneCorner);
		expect(r.boundaryEdges).toBe(6);
		expect(r.boundaryLoops).toBe(1);
		expect(r.holes[0].edgeCount).toBe(6);
		expect(r.nonManifoldVertices).toBe(1);
		expect(r.genus).toBeNull();
	});

	it('keeps two loops apart at a corner shared by two holed cubes', () => {
		// Cube A's face 3 and cube B's face 0 both touch the shared corner (1, 1, 1): a walk that
		// took any boundary edge at that vertex could join the two rims into one.
		const r = inspectAs(format, weldExact(withoutFaces(concat(cube, unitCube([1, 1, 1])), [3, 12])));
		expect(r.boundaryLoops).toBe(2);
		expect(r.holes.map((h) => [h.edgeCount, h.shell])).toEqual([
			[3, 0],
			[3, 1]
		]);
		expect(r.shells.map((s) => s.genus)).toEqual([0, 0]);
	});

	it('reports a non-manifold edge for two cubes sharing an edge', () => {
		const r = inspectAs(format, weldExact(concat(cube, unitCube([1, 1, 0]))));
		expect(r.nonManifoldEdges).toBe(1);
		expect(r.watertight).toBe(false);
		expect(r.genus).toBeNull();
		expect(r.components).toBe(1);
	});

	it('reports a non-manifold vertex for two cubes touching at a corner', () => {
		const r = inspectAs(format, weldExact(concat(cube, unitCube([1, 1, 1]))));
		expect(r.nonManifoldVertices).toBe(1);
		expect(r.nonManifoldEdges).toBe(0);
		expect(r.boundaryEdges).toBe(0);
		expect(r.watertight).toBe(false);
		expect(r.components).toBe(2);
		// Each cube alone is a manifold sphere, so per-shell genus sums to 0; V − E + F = 15 − 36 + 24.
		expect(r.genus).toBe(0);
		expect(r.eulerCharacteristic).toBe(3);
	});

	it('finds one flipped face and says the cube is orientable but inconsistent', () => {
		const r = inspectAs(format, flipFaces(cube, [3]));
		expect(r.orientable).toBe(true);
		expect(r.consistentlyOriented).toBe(false);
		expect(r.flippedFaces).toBe(1);
		expect(r.watertight).toBe(true);
	});

	it('reports a Möbius strip as non-orientable with one boundary loop and no genus', () => {
		const r = inspectAs(format, mobiusStrip());
		expect(r.orientable).toBe(false);
		expect(r.consistentlyOriented).toBe(false);
		expect(r.boundaryLoops).toBe(1);
		expect(r.holes[0].edgeCount).toBe(48);
		expect(r.genus).toBeNull();
		// Möbius strip: χ = 0 (Euler–Poincaré for the strip, a disk with a half-twisted band).
		expect(r.eulerCharacteristic).toBe(0);
	});

	it('counts separate shells and calls a small cube with a third of the faces a body, not a speck', () => {
		const tiny = unitCube([5, 0, 0]);
		for (let i = 0; i < tiny.positions.length; i += 3) tiny.positions[i] = 5 + (tiny.positions[i] - 5) / 16;
		for (let i = 1; i < tiny.positions.length; i++) if (i % 3) tiny.positions[i] /= 16;
		const r = inspectAs(format, concat(cube, unitCube([3, 0, 0]), tiny));
		expect(r.components).toBe(3);
		expect(r.shells.map((s) => s.faces)).toEqual([12, 12, 12]);
		expect(r.shells.every((s) => s.closed && s.genus === 0)).toBe(true);
		expect(r.hints.find((h) => h.kind === 'floating-shells')).toBeUndefined();
		const hint = r.hints.find((h) => h.kind === 'separate-bodies');
		expect(hint?.count).toBe(3);
		expectClose(hint!.areaShare!, (6 + 6 / 256) / (12 + 6 / 256), 1e-9, 'area share of all but the largest');
	});

	it('counts a collinear face as degenerate without breaking the shell', () => {
		const r = inspectAs(format, cubeWithDegenerate);
		expect(r.degenerateFaces).toBe(1);
		expectClose(r.area, 6, 1e-12, 'area');
	});

	it('counts a face repeated with reversed winding as a duplicate', () => {
		const m: MeshBuffers = { positions: cube.positions, indices: Uint32Array.from([...cube.indices, 0, 1, 2]) };
		const r = inspectAs(format, m);
		expect(r.duplicateFaces).toBe(1);
		expect(r.nonManifoldEdges).toBe(3);
	});
});

describe('inspection of bad input', () => {
	it('throws a read error naming the file when the content is no mesh', () => {
		expect(() => inspectBytes(new TextEncoder().encode('hello'), 'notes.txt')).toThrow(/notes\.txt/);
	});

	it('refuses a mesh with a non-finite coordinate, naming the vertex', () => {
		const c = unitCube();
		c.positions[4] = Number.NaN;
		expect(() => inspectMesh(asParsed(c))).toThrow(MeshReadError);
		expect(() => inspectMesh(asParsed(c))).toThrow(/vertex 1 /);
	});

	it('refuses a mesh above maxFaces before analysis', () => {
		expect(() => inspectBytes(writeBinaryStl(cube), 'c.stl', { maxFaces: 5 })).toThrow(/5/);
	});
});

describe('volume only where it is defined (common practice: divergence theorem needs a closed, oriented surface)', () => {
	it('an open box reports volume and wetted area null with reason open', () => {
		const r = inspectMesh(asParsed(withoutFaces(unitCube(), [0, 1])));
		expect(r.volume).toBeNull();
		expect(r.wettedArea).toBeNull();
		expect(r.volumeUndefinedReason).toBe('open');
	});
	it('a closed cube with one face flipped reports reason inconsistent-orientation', () => {
		const r = inspectMesh(asParsed(flipFaces(unitCube(), [3])));
		expect(r.volume).toBeNull();
		expect(r.volumeUndefinedReason).toBe('inconsistent-orientation');
		expect(r.shells[0].volume).toBeNull();
	});
	it('two closed cubes report the summed volume and per-shell volumes', () => {
		const r = inspectMesh(asParsed(concat(unitCube(), unitCube([3, 0, 0]))));
		expectClose(r.volume!, 2, 1e-12, 'volume');
		for (const s of r.shells) expectClose(s.volume!, 1, 1e-12, 'shell volume');
		expect(r.volumeUndefinedReason).toBeNull();
	});
});
