import { describe, expect, it } from 'vitest';
import { buildFindings } from './findings';
import { computeOverlays } from '../../mesh/overlays';
import { inspectMesh } from '../../mesh/inspect';
import { asParsed, unitCube, withoutFaces } from '../../mesh/test-meshes';

describe('buildFindings', () => {
	it('takes counts from the report and lists each hole with its perimeter', () => {
		const mesh = withoutFaces(unitCube(), [0, 2]);
		const report = inspectMesh(asParsed(mesh), { skipSelfIntersections: true });
		const groups = buildFindings(report, computeOverlays(mesh, report), 'mm');
		const holes = groups.find((g) => g.kind === 'holes')!;
		expect(holes.count).toBe(report.boundaryLoops);
		expect(holes.items).toHaveLength(2);
		// Faces 0 (z = 0) and 2 (z = 1) removed: each hole is a right triangle with legs 1, perimeter 2 + √2 ≈ 3.41 (analytic), lying on a bbox plane.
		expect(holes.items[0].label).toBe('hole 1, 3.414 mm around, flat on z-min');
		expect('segments' in holes.items[0].target && holes.items[0].target.segments?.length).toBe(18);
		const si = groups.find((g) => g.kind === 'selfIntersections')!;
		expect(si.count).toBeNull();
		expect(si.note).toBe('not checked');
	});

	it('marks counts as the viewer\'s own when there is no report', () => {
		const mesh = withoutFaces(unitCube(), [0]);
		const groups = buildFindings(null, computeOverlays(mesh, null), 'mm');
		expect(groups.find((g) => g.kind === 'holes')!.count).toBe(1);
		expect(groups.find((g) => g.kind === 'holes')!.note).toBe('viewer');
	});
});
