import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { buildCellFindings, buildFindings, type FindingTarget } from './findings';
import { inspectBytes } from '../../mesh/inspect';
import { computeOverlays } from '../../mesh/overlays';
import { inspectMesh } from '../../mesh/inspect';
import { asParsed, unitCube, withoutFaces } from '../../mesh/testing/test-meshes';

describe('buildFindings', () => {
	it('takes counts from the report and lists each hole with its perimeter', () => {
		const mesh = withoutFaces(unitCube(), [0, 2]);
		const report = inspectMesh(asParsed(mesh), { skipSelfIntersections: true });
		const groups = buildFindings(report, computeOverlays(mesh, report), 'mm');
		const holes = groups.find((g) => g.kind === 'holes')!;
		expect(holes.count).toBe(report.boundaryLoops);
		expect(holes.items).toHaveLength(2);
		// Faces 0 (z = 0) and 2 (z = 1) removed: each hole is a right triangle with legs 1, perimeter 2 + √2 ≈ 3.414 (analytic; 4 significant digits, format.ts), lying on a bbox plane.
		expect(holes.items[0].label).toBe('hole 1, 3.414 mm around, flat on z-min');
		expect('segments' in holes.items[0].target && holes.items[0].target.segments?.length).toBe(18);
		const si = groups.find((g) => g.kind === 'selfIntersections')!;
		expect(si.count).toBeNull();
		expect(si.note).toBe('not checked');
	});

	it('writes lengths and points with the project formatter, in the unit that reads plainly', () => {
		// A cube of 1 µm in a metre project: the hole's perimeter (2 + √2) µm (analytic) moves to the first
		// prefixed unit where it reads plainly (format.ts), not 3.41e-6 m.
		const mesh = withoutFaces(unitCube(), [0]);
		const tiny = { ...mesh, positions: Float64Array.from(mesh.positions, (x) => x * 1e-6) };
		const groups = buildFindings(null, computeOverlays(tiny, null), 'm', Math.sqrt(3) * 1e-6);
		expect(groups.find((g) => g.kind === 'holes')!.items[0].label).toBe('hole 1, 0.003414 mm around');
	});

	it('marks counts as the viewer\'s own when there is no report', () => {
		const mesh = withoutFaces(unitCube(), [0]);
		const groups = buildFindings(null, computeOverlays(mesh, null), 'mm');
		expect(groups.find((g) => g.kind === 'holes')!.count).toBe(1);
		expect(groups.find((g) => g.kind === 'holes')!.note).toBe('viewer');
	});
});

describe('buildCellFindings', () => {
	// Two 20 × 10 × 10 mm blocks 0.01 mm apart along x (scripts/make-fixtures.ts), cells of 2 mm.
	// Analytic: the gap is 0.01 mm = 0.005 cells, between the faces at x = 20 and x = 20.01.
	const r = inspectBytes(new Uint8Array(readFileSync('fixtures/blocks-0.01-apart.stl')), 'blocks-0.01-apart.stl', { cellSize: 2 });

	it('lists the narrowest gap with the ray across it, then each gap region, flying to where they are', () => {
		const [walls, gaps] = buildCellFindings(r, 'mm');
		expect(walls.which).toBe('wall');
		expect(walls.count).toBe(0);
		expect(gaps.count).toBe(2);
		expect(gaps.note).toBe(`under ${r.cellSizeChecks!.thinCells} cells`);
		const [worst, ...regions] = gaps.items;
		expect(worst.label).toMatch(/^narrowest gap: 0\.01 mm \(0\.005 cells\)/);
		const t = worst.target as FindingTarget;
		// The ray runs from one block's face to the other's: its two ends lie on x = 20 and x = 20.01.
		expect([t.segments![0], t.segments![3]].map((x) => Math.round(x * 100) / 100).sort()).toEqual([20, 20.01]);
		expect(t.center[0]).toBeCloseTo(20.005, 4);
		expect(regions).toHaveLength(2);
		for (const g of regions) {
			const tg = g.target as FindingTarget;
			expect(Math.abs(tg.center[0] - 20.005)).toBeLessThan(0.01);
			expect(tg.radius).toBeGreaterThanOrEqual(4);
			expect(g.label).toMatch(/^gap region \d: 0\.01 mm \(0\.005 cells\) at least, 2 faces, 100 mm²$/);
		}
	});

	it('is empty when the check had no cell size', () => {
		expect(buildCellFindings(inspectBytes(new Uint8Array(readFileSync('fixtures/blocks-0.01-apart.stl')), 'b.stl'), 'mm')).toEqual([]);
	});
});
