import { describe, expect, it } from 'vitest';
import { computeOverlays, loopForHole, overlayTransferables } from './overlays';
import { inspectMesh } from './inspect';
import { asParsed, concat, flipFaces, icosphere, unitCube, weldExact, withoutFaces } from './testing/test-meshes';
import { expectClose } from './testing/test-close';
import type { MeshBuffers } from './types';

const cube = unitCube();

function segmentLength(seg: Float32Array, s: number): number {
	const o = 6 * s;
	return Math.hypot(seg[o + 3] - seg[o], seg[o + 4] - seg[o + 1], seg[o + 5] - seg[o + 2]);
}

describe('computeOverlays', () => {
	it('draws no overlay for a closed unit cube', () => {
		const o = computeOverlays(cube, null, { minEdgeLength: 0.5 });
		expect(o.holes).toHaveLength(0);
		expect(o.holeSegments.length).toBe(0);
		expect(o.nonManifoldEdgeCount).toBe(0);
		expect(o.nonManifoldVertexCount).toBe(0);
		expect(o.shortEdgeCount).toBe(0);
		expect(o.degenerateFaces.length).toBe(0);
		expect(o.flippedFaces.length).toBe(0);
		expect(o.floatingShells.length).toBe(0);
		expect(o.shellCount).toBe(1);
	});

	it('outlines the hole of a cube with one face removed as three segments of perimeter 2 + √2 (analytic)', () => {
		const o = computeOverlays(withoutFaces(cube, [0]), null);
		expect(o.holes).toHaveLength(1);
		expect(o.holes[0].edgeCount).toBe(3);
		expect(o.holeSegments.length).toBe(18);
		let sum = 0;
		for (let s = 0; s < 3; s++) sum += segmentLength(o.holeSegments, s);
		expectClose(sum, 2 + Math.SQRT2, 1e-6, 'segment sum');
		expectClose(o.holes[0].perimeter, 2 + Math.SQRT2, 1e-12, 'perimeter');
		// Face 0 is (0, 2, 1) on z = 0: the loop lies on z = 0.
		for (let i = 2; i < 18; i += 3) expect(o.holeSegments[i]).toBe(0);
	});

	it('matches each report hole to its loop by centroid', () => {
		const mesh = withoutFaces(cube, [0, 2]);
		const report = inspectMesh(asParsed(mesh), { skipSelfIntersections: true });
		const o = computeOverlays(mesh, report);
		expect(o.holes).toHaveLength(report.boundaryLoops);
		report.holes.forEach((h, i) => {
			const l = loopForHole(o.holes, h.centroid);
			expect(o.holes[l].centroid).toEqual(h.centroid);
			expect(o.holes[l].perimeter).toBe(report.holes[i].perimeter);
		});
	});

	it('marks the shared edge of a fin on a cube edge as non-manifold (three faces on one edge)', () => {
		// Fin (0, 1, 8) with vertex 8 off the cube: edge 0–1 now has three faces.
		const fin: MeshBuffers = {
			positions: Float64Array.from([...cube.positions, 0.5, -1, -1]),
			indices: Uint32Array.from([...cube.indices, 0, 1, 8])
		};
		const o = computeOverlays(fin, null);
		expect(o.nonManifoldEdgeCount).toBe(1);
		const s = o.nonManifoldEdgeSegments;
		expect([...s].sort()).toEqual([0, 0, 0, 0, 0, 1]);
		const r = inspectMesh(asParsed(fin), { skipSelfIntersections: true });
		expect(o.nonManifoldEdgeCount).toBe(r.nonManifoldEdges);
	});

	it('puts a non-manifold vertex where two cubes touch at one corner (1, 1, 1)', () => {
		const m = weldExact(concat(cube, unitCube([1, 1, 1])));
		const o = computeOverlays(m, null);
		expect(o.nonManifoldVertexCount).toBe(1);
		expect([...o.nonManifoldVertexPoints]).toEqual([1, 1, 1]);
		expect(o.nonManifoldVertexCount).toBe(inspectMesh(asParsed(m), { skipSelfIntersections: true }).nonManifoldVertices);
	});

	it('lists edges strictly shorter than the minimum, agreeing with the report count', () => {
		// Cube edges are 1, face diagonals √2: a threshold of 1.2 catches the 12 cube edges only.
		const o = computeOverlays(cube, null, { minEdgeLength: 1.2 });
		expect(o.shortEdgeCount).toBe(12);
		expect(o.shortEdgeSegments.length).toBe(72);
		expect(computeOverlays(cube, null, { minEdgeLength: 1 }).shortEdgeCount).toBe(0);
		const r = inspectMesh(asParsed(cube), { skipSelfIntersections: true, minEdgeLength: 1.2 });
		expect(o.shortEdgeCount).toBe(r.shortEdges);
	});

	it('lists a collinear face and a collapsed face as degenerate', () => {
		const m: MeshBuffers = {
			positions: Float64Array.from([...cube.positions, 0.5, 0, 0]),
			indices: Uint32Array.from([...cube.indices, 0, 8, 1, 3, 3, 5])
		};
		const o = computeOverlays(m, null);
		expect([...o.degenerateFaces]).toEqual([12, 13]);
		expect(o.degenerateFaces.length).toBe(inspectMesh(asParsed(m), { skipSelfIntersections: true }).degenerateFaces);
		expect(o.faceShell[13]).toBe(-1);
	});

	it('lists the one flipped face of a cube with face 4 reversed', () => {
		const m = flipFaces(cube, [4]);
		const o = computeOverlays(m, null);
		expect([...o.flippedFaces]).toEqual([4]);
		expect(o.flippedFaces.length).toBe(inspectMesh(asParsed(m), { skipSelfIntersections: true }).flippedFaces);
	});

	it('counts a small far cube as a floating shell with its 12 faces and its box', () => {
		// A speck is small by area and by faces (hints.smallShellIds): 12 faces beside a 5,120-face sphere.
		const big = icosphere(4, 20);
		const small = unitCube([30, 0, 0]);
		const m = concat(big, small);
		const report = inspectMesh(asParsed(m), { skipSelfIntersections: true });
		const o = computeOverlays(m, report);
		const F = big.indices.length / 3;
		expect(o.shellCount).toBe(2);
		expect([...o.floatingShells]).toEqual([1]);
		expect([...o.floatingStart]).toEqual([0, 12]);
		expect([...o.floatingFaces]).toEqual(Array.from({ length: 12 }, (_, i) => F + i));
		expect([...o.floatingBoxes]).toEqual([30, 0, 0, 31, 1, 1]);
		expect(report.hints.find((h) => h.kind === 'floating-shells')?.count).toBe(1);
		for (let t = 0; t < F + 12; t++) expect(o.faceShell[t]).toBe(t < F ? 0 : 1);
	});

	it('lists no floating shell for a cube beside a cube 20 times larger (a body, not a speck: half the faces)', () => {
		const big = unitCube();
		for (let i = 0; i < big.positions.length; i++) big.positions[i] *= 20;
		const m = concat(big, unitCube([30, 0, 0]));
		const report = inspectMesh(asParsed(m), { skipSelfIntersections: true });
		expect([...computeOverlays(m, report).floatingShells]).toEqual([]);
		expect(report.hints.map((h) => h.kind)).toEqual(['separate-bodies']);
	});

	it('takes self-intersection points and face pairs from the report sample', () => {
		// Two unit cubes overlapping by half along x intersect.
		const m = concat(cube, unitCube([0.5, 0.25, 0.25]));
		const report = inspectMesh(asParsed(m));
		expect(report.selfIntersectionSample.length).toBeGreaterThan(0);
		const o = computeOverlays(m, report);
		expect(o.selfIntersectionPoints.length).toBe(3 * report.selfIntersectionSample.length);
		expect(o.selfIntersectionFaces[0]).toBe(report.selfIntersectionSample[0].a);
		expect(o.selfIntersectionFaces[1]).toBe(report.selfIntersectionSample[0].b);
	});

	it('caps drawn items at maxItems but keeps exact counts', () => {
		const o = computeOverlays(cube, null, { minEdgeLength: 1.2, maxItems: 5 });
		expect(o.shortEdgeCount).toBe(12);
		expect(o.shortEdgeSegments.length).toBe(30);
		expect(o.truncated).toBe(true);
		// An even sample of the twelve edges, not the first five.
		const all = computeOverlays(cube, null, { minEdgeLength: 1.2 }).shortEdgeSegments;
		const picked = [];
		for (let s = 0; s < 5; s++) picked.push(all.findIndex((_, i) => i % 6 === 0 && o.shortEdgeSegments.subarray(6 * s, 6 * s + 6).every((x, k) => all[i + k] === x)) / 6);
		expect(picked).toEqual([2, 4, 7, 9, 11]);
	});

	it('hands over each buffer once for transfer', () => {
		const o = computeOverlays(withoutFaces(cube, [0]), null);
		const list = overlayTransferables(o);
		expect(new Set(list).size).toBe(list.length);
		expect(list).toContain(o.holeSegments.buffer);
	});
});
