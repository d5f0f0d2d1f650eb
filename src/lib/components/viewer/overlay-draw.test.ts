import { describe, expect, it } from 'vitest';
import { boxSegments, buildOverlayDraw, drawTransferables, faceCentres, faceIndex, MARKER_CAP, midpoints } from './overlay-draw';
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
