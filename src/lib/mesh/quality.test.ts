import { describe, expect, it } from 'vitest';
import { buildReport } from './report';
import { marchingCubes } from './testing/marching-cubes';
import { sphere } from './testing/implicit-shapes';
import { asParsed, concat, unitCube } from './testing/test-meshes';
import type { MeshBuffers } from './types';
import { expectClose } from './testing/test-close';

const tri = (p: number[]): MeshBuffers => ({ positions: Float64Array.from(p), indices: Uint32Array.from([0, 1, 2]) });
const qualityOf = (m: MeshBuffers) => {
	const h = buildReport(asParsed(m)).faceQualityHistogram;
	return h.counts.findIndex((c) => c > 0) / h.counts.length;
};

describe('face quality and edge lengths', () => {
	it('puts an equilateral triangle in the top quality bin (2r/R = 1)', () => {
		const r = buildReport(asParsed(tri([0, 0, 0, 1, 0, 0, 0.5, Math.sqrt(3) / 2, 0])));
		expect(r.faceQualityHistogram.counts.at(-1)).toBe(1);
		expect(r.faceQualityHistogram.bins).toHaveLength(r.faceQualityHistogram.counts.length + 1);
	});

	it('gives a right isosceles triangle 2r/R = 2(√2 − 1) ≈ 0.83', () => {
		// Right triangle: r = (a + b − c)/2, R = c/2 (elementary geometry) → r/R = √2 − 1 for legs 1.
		const q = qualityOf(tri([0, 0, 0, 1, 0, 0, 0, 1, 0]));
		const bins = buildReport(asParsed(tri([0, 0, 0, 1, 0, 0, 0, 1, 0]))).faceQualityHistogram.counts.length;
		expect(q).toBe(Math.floor(2 * (Math.SQRT2 - 1) * bins) / bins);
	});

	it('measures the unit cube edges as 1 and √2 and counts edges below the threshold', () => {
		const r = buildReport(asParsed(unitCube()), { minEdgeLength: 1.2 });
		expect(r.minEdgeLength).toBe(1);
		expectClose(r.maxEdgeLength, Math.SQRT2, 1e-15, 'diagonal');
		expect(r.shortEdges).toBe(12);
		expect(r.edgeLengthHistogram.counts.reduce((a, b) => a + b, 0)).toBe(18);
		expect(r.edgeLengthHistogram.counts[0]).toBe(12);
		expect(r.edgeLengthHistogram.counts.at(-1)).toBe(6);
		expect(r.hints.find((h) => h.kind === 'short-edges')?.count).toBe(12);
	});
});

describe('hints', () => {
	it('says the surface was clipped when a sphere is sampled in a box smaller than itself', () => {
		// Grid from −0.8 to 0.8 around a unit sphere: marching cubes leaves the six caps open, each
		// rim on one face of the (clipped) bounding box.
		const m = marchingCubes(sphere(1).field, { min: [-0.8, -0.8, -0.8], cell: 0.05, cells: [32, 32, 32] });
		const r = buildReport(asParsed(m));
		expect(r.boundaryLoops).toBe(6);
		expect(new Set(r.holes.map((h) => h.onBboxPlane))).toEqual(new Set(['x-min', 'x-max', 'y-min', 'y-max', 'z-min', 'z-max']));
		expect(r.hints.find((h) => h.kind === 'clipped-by-bbox-plane')?.count).toBe(6);
	});

	it('finds a patch of slivers', () => {
		// A closed fan of needles: 12 triangles 10 long and 0.01 wide around a common apex.
		const p: number[] = [0, 0, 0];
		const n = 12;
		for (let i = 0; i < n; i++) p.push(10 * Math.cos((0.01 * i) / 10), 10 * Math.sin((0.01 * i) / 10), 0);
		const idx: number[] = [];
		for (let i = 0; i + 1 < n; i++) idx.push(0, 1 + i, 2 + i);
		const r = buildReport(asParsed({ positions: Float64Array.from(p), indices: Uint32Array.from(idx) }));
		const hint = r.hints.find((h) => h.kind === 'sliver-cluster');
		expect(hint?.count).toBe(1);
		expect(r.degenerateFaces).toBe(0);
	});

	it('only counts two clean cubes of equal size as separate bodies', () => {
		expect(buildReport(asParsed(concat(unitCube(), unitCube([3, 0, 0])))).hints.map((h) => h.kind)).toEqual(['separate-bodies']);
	});
});
