/**
 * Concave polygons in OBJ and PLY files: an L-shaped prism whose two caps are single six-cornered
 * faces, written starting at the corner next to the inner one so that a fan from corner 0 would lay
 * a triangle outside the L. Expected values are the prism's analytic area and volume (cap area 3,
 * perimeter 8, height 1: area 2·3 + 8·1 = 14, volume 3) and a closed, consistently oriented surface
 * of genus 0 without crossings (Euler–Poincaré: V − E + F = 2 for one closed shell of genus 0).
 */
import { describe, expect, it } from 'vitest';
import { inspectBytes } from './inspect';
import { readMesh } from './read';

// The L outline, counter-clockwise seen from +z, starting next to the inner corner (1, 1).
const L: [number, number][] = [[2, 1], [1, 1], [1, 2], [0, 2], [0, 0], [2, 0]];

function lPrismFaces(): number[][] {
	const n = L.length;
	const bottom = L.map((_, i) => i), top = L.map((_, i) => n + i);
	const faces = [top, [...bottom].reverse()];
	for (let i = 0; i < n; i++) {
		const j = (i + 1) % n;
		faces.push([i, j, n + j, n + i]);
	}
	return faces;
}
const lPrismVertices = (): number[][] => [...L.map(([x, y]) => [x, y, 0]), ...L.map(([x, y]) => [x, y, 1])];

function lPrismObj(): Uint8Array {
	const lines = [...lPrismVertices().map((v) => `v ${v.join(' ')}`), ...lPrismFaces().map((f) => `f ${f.map((i) => i + 1).join(' ')}`)];
	return new TextEncoder().encode(lines.join('\n') + '\n');
}

function lPrismPly(): Uint8Array {
	const v = lPrismVertices(), f = lPrismFaces();
	const head = ['ply', 'format ascii 1.0', `element vertex ${v.length}`, 'property float x', 'property float y', 'property float z', `element face ${f.length}`, 'property list uchar int vertex_indices', 'end_header'];
	return new TextEncoder().encode([...head, ...v.map((p) => p.join(' ')), ...f.map((c) => `${c.length} ${c.join(' ')}`)].join('\n') + '\n');
}

describe('concave polygons are split inside the polygon', () => {
	for (const [name, bytes] of [['l-prism.obj', lPrismObj()], ['l-prism.ply', lPrismPly()]] as const) {
		it(`${name}: the L-shaped caps read as the prism they are`, () => {
			const r = inspectBytes(bytes, name);
			expect(r.faces).toBe(2 * 4 + 6 * 2);
			expect(r.area).toBeCloseTo(14, 12);
			expect(r.volume).toBeCloseTo(3, 12);
			expect(r.watertight).toBe(true);
			expect(r.consistentlyOriented).toBe(true);
			expect(r.flippedFaces).toBe(0);
			expect(r.selfIntersectingPairs).toBe(0);
			expect(r.genus).toBe(0);
			expect(r.eulerCharacteristic).toBe(2);
		});
	}

	it('keeps the fan of a convex polygon triangle for triangle', () => {
		// A regular hexagon, its corners in order: the fan (0,1,2), (0,2,3), (0,3,4), (0,4,5).
		const hex = Array.from({ length: 6 }, (_, i) => `v ${Math.cos((i * Math.PI) / 3)} ${Math.sin((i * Math.PI) / 3)} 0`);
		const m = readMesh(new TextEncoder().encode([...hex, 'f 1 2 3 4 5 6'].join('\n')), 'hex.obj');
		expect([...m.indices]).toEqual([0, 1, 2, 0, 2, 3, 0, 3, 4, 0, 4, 5]);
	});

	it('splits a dart-shaped quad at its inner corner, turned the quad’s way', () => {
		// Corners (0,0), (2,1), (0,2), (0.5,1): the inner corner is the last one, so the fan from corner 0
		// would cover (0,0), (2,1), (0,2) — outside the dart.
		const m = readMesh(new TextEncoder().encode('v 0 0 0\nv 2 1 0\nv 0 2 0\nv 0.5 1 0\nf 1 2 3 4\n'), 'dart.obj');
		const tris = [[...m.indices.slice(0, 3)], [...m.indices.slice(3, 6)]];
		// Both triangles hold the inner corner (index 3), and both turn counter-clockwise as the quad does.
		for (const t of tris) expect(t).toContain(3);
		const p = m.positions;
		for (const [a, b, c] of tris) expect((p[3 * b] - p[3 * a]) * (p[3 * c + 1] - p[3 * a + 1]) - (p[3 * b + 1] - p[3 * a + 1]) * (p[3 * c] - p[3 * a])).toBeGreaterThan(0);
	});
});
