import { describe, expect, it } from 'vitest';
import { boxSegments, buildOverlayDraw, drawTransferables, faceCentres, faceIndex, MARKER_CAP, midpoints, lineQuads } from './overlay-draw';
import { computeOverlays } from '../../mesh/overlays';
import { unitCube, withoutFaces } from '../../mesh/testing/test-meshes';

describe('overlay draw buffers', () => {
	it('outlines a box with its twelve edges, each joining corners that differ in one axis', () => {
		const seg = boxSegments(Float32Array.from([0, 0, 0, 1, 2, 3]));
		expect(seg.length).toBe(12 * 6);
		const lengths: number[] = [];
		for (let s = 0; s < 12; s++) {
			const a = seg.subarray(6 * s, 6 * s + 3), b = seg.subarray(6 * s + 3, 6 * s + 6);
			expect([0, 1, 2].filter((k) => a[k] !== b[k])).toHaveLength(1);
			lengths.push(Math.hypot(b[0] - a[0], b[1] - a[1], b[2] - a[2]));
		}
		expect(lengths.sort()).toEqual([1, 1, 1, 1, 2, 2, 2, 2, 3, 3, 3, 3]);
	});

	it('takes face corners from the index buffer and centres from the positions', () => {
		const positions = [0, 0, 0, 3, 0, 0, 0, 3, 0, 0, 0, 3];
		const indices = Uint32Array.from([0, 1, 2, 0, 1, 3]);
		expect([...faceIndex(indices, Uint32Array.from([1]))]).toEqual([0, 1, 3]);
		expect([...faceCentres(positions, indices, Uint32Array.from([0, 1]))]).toEqual([1, 1, 0, 1, 0, 1]);
	});

	it('spreads capped midpoints over all segments', () => {
		const seg = new Float32Array(6 * 10);
		for (let s = 0; s < 10; s++) seg.set([s, 0, 0, s, 0, 0], 6 * s);
		expect([...midpoints(seg, 5)].filter((_, i) => i % 3 === 0)).toEqual([0, 2, 4, 6, 8]);
		expect(midpoints(seg, 50).length).toBe(30);
	});

	it('builds every buffer for a mesh with holes, each transferable once', () => {
		const cube = unitCube();
		const o = computeOverlays(withoutFaces(cube, [0]), null, { minEdgeLength: 1.2 });
		const d = buildOverlayDraw(o, cube.positions, withoutFaces(cube, [0]).indices);
		expect(d.holeCentres.length).toBe(3 * o.holes.length);
		expect(d.shortEdgeMidpoints.length).toBe(3 * Math.min(MARKER_CAP, o.shortEdgeSegments.length / 6));
		expect(d.sampled).toEqual({});
		const list = drawTransferables(d);
		expect(new Set(list).size).toBe(list.length);
	});
});

describe('lineQuads', () => {
	// The vertex shader's corner rule (layers/thick-lines.ts) done by hand in the screen plane:
	// half the width across the segment times the side, and half the width back past the corner's own end.
	const corner = (q: ReturnType<typeof lineQuads>, v: number, w: number): [number, number] => {
		const [x, y] = [q.position[3 * v], q.position[3 * v + 1]];
		let dx = q.other[3 * v] - x, dy = q.other[3 * v + 1] - y;
		const l = Math.hypot(dx, dy) || 1;
		dx /= l;
		dy /= l;
		return [x + (-dy * q.side[v] - dx) * 0.5 * w, y + (dx * q.side[v] - dy) * 0.5 * w];
	};
	const area = (a: number[], b: number[], c: number[]) => 0.5 * ((b[0] - a[0]) * (c[1] - a[1]) - (c[0] - a[0]) * (b[1] - a[1]));

	it('makes two triangles a segment that tile its (length + width) × width rectangle without overlap', () => {
		const q = lineQuads(Float32Array.of(0, 0, 0, 10, 0, 0, 10, 0, 0, 10, 5, 0));
		expect(q.position).toHaveLength(24);
		expect(q.index).toEqual(Uint32Array.of(0, 1, 2, 0, 2, 3, 4, 5, 6, 4, 6, 7));
		// Dashes run on along the segments: 0 → 10 on the first, 10 → 15 on the second.
		expect([...q.distance]).toEqual([0, 0, 10, 10, 10, 10, 15, 15]);
		for (const [s, len] of [[0, 10], [1, 5]]) {
			const c = [0, 1, 2, 3].map((k) => corner(q, 4 * s + k, 2));
			const a1 = area(c[0], c[1], c[2]), a2 = area(c[0], c[2], c[3]);
			expect(Math.sign(a1)).toBe(Math.sign(a2));
			expect(Math.abs(a1) + Math.abs(a2)).toBeCloseTo((len + 2) * 2, 9);
		}
	});
});
