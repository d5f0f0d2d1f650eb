import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { inspectBytes } from '../mesh/inspect';
import { concat, unitCube } from '../mesh/testing/test-meshes';
import { writeBinaryStl } from '../mesh/write';
import { DEFAULT_GATE_RULES, gateRulesSchema } from './profile';
import type { InspectionReport } from '../mesh/report';
import { DEFAULT_GATE_RULES as D, SIZE_IN_CELLS } from './profile';
import { evaluateGate, gatePasses, likelyUnitFix, minEdgeThreshold, scaleFix, severityScore } from './rules';

const report = (name: string) => inspectBytes(new Uint8Array(readFileSync(`fixtures/${name}`)), name);
const ctx = { units: 'mm', targetCellSize: 2 };

describe('gate rules', () => {
	it('clears a closed, outward cube under the default profile', () => {
		const out = evaluateGate(report('cube-closed.stl'), DEFAULT_GATE_RULES, ctx);
		expect(out.every((o) => o.passed)).toBe(true);
		expect(gatePasses(out)).toBe(true);
		expect(severityScore(out)).toBe(0);
	});

	it('holds a cube with a missing face and says where the hole is and what to change', () => {
		const out = evaluateGate(report('cube-one-face-missing.stl'), DEFAULT_GATE_RULES, ctx);
		const closed = out.find((o) => o.rule === 'closed')!;
		expect(closed.passed).toBe(false);
		expect(closed.measured).toBe('1 hole, 4 open edges');
		expect(closed.explanation).toContain('4 mm around');
		expect(closed.location?.points).toHaveLength(1);
		expect(gatePasses(out)).toBe(false);
		expect(severityScore(out)).toBe(10);
	});

	it('holds a block with a T-junction slit and says nothing is missing, not that a face is', () => {
		const r = report('block-t-junction.stl');
		expect(r.holes).toHaveLength(1);
		expect(r.holes[0].area).toBe(0);
		const closed = evaluateGate(r, DEFAULT_GATE_RULES, ctx).find((o) => o.rule === 'closed')!;
		expect(closed.passed).toBe(false);
		expect(closed.explanation).toContain('no width (40 units of seam in all)');
		expect(closed.explanation).toContain('T-junction');
		expect(closed.explanation).toContain('Nothing is missing');
		expect(closed.explanation).not.toMatch(/flat face is missing|add the missing faces|around, centred/);
		// The faces either side of the slit touch along it: counted as crossings, and said to be the slit's.
		const si = evaluateGate(r, DEFAULT_GATE_RULES, ctx).find((o) => o.rule === 'no-self-intersections')!;
		expect(r.selfIntersectingPairs).toBeGreaterThan(0);
		expect(si.explanation).toContain('close the slits first');
		expect(si.explanation).not.toContain('folds through itself');
	});

	it('reads the shortest-edge limit as a fraction of the cell size or as an absolute length', () => {
		expect(minEdgeThreshold({ ...DEFAULT_GATE_RULES, minEdgeLength: { mode: 'fraction-of-cell', value: 0.6 } }, ctx)).toBeCloseTo(1.2, 12);
		expect(minEdgeThreshold({ ...DEFAULT_GATE_RULES, minEdgeLength: { mode: 'absolute', value: 0.3 } }, ctx)).toBe(0.3);
		const out = evaluateGate(report('cube-closed.stl'), { ...DEFAULT_GATE_RULES, minEdgeLength: { mode: 'fraction-of-cell', value: 0.6 } }, ctx);
		const rule = out.find((o) => o.rule === 'min-edge-length')!;
		expect(rule.passed).toBe(false);
		expect(rule.limit).toBe('≥ 1.2 mm (0.6 × cell size 2 mm)');
	});

	it('writes the shortest edge in the unit of its limit and coordinates within round-off as 0', () => {
		// The unit cube read as metres against a 0.1 mm limit: both in millimetres.
		const r = report('cube-closed.stl');
		const m = { units: 'm', targetCellSize: 0.005 };
		const rule = evaluateGate(r, { ...DEFAULT_GATE_RULES, minEdgeLength: { mode: 'absolute', value: 0.0001 } }, m).find((o) => o.rule === 'min-edge-length')!;
		expect(rule.limit).toBe('≥ 0.1 mm');
		expect(rule.measured).toBe('shortest 1,000 mm');
		const open = report('cube-one-face-missing.stl');
		const nudged = { ...open, holes: open.holes.map((h) => ({ ...h, centroid: [h.centroid[0] - 2.98e-9, h.centroid[1], h.centroid[2]] as [number, number, number] })) };
		const closed = evaluateGate(nudged, DEFAULT_GATE_RULES, ctx).find((o) => o.rule === 'closed')!;
		expect(closed.explanation).not.toMatch(/e-|× 10/);
	});

	it('checks the expected genus only when the profile asks for one', () => {
		const r = report('cube-closed.stl');
		expect(evaluateGate(r, DEFAULT_GATE_RULES, ctx).some((o) => o.rule === 'expected-genus')).toBe(false);
		const g1 = evaluateGate(r, { ...DEFAULT_GATE_RULES, expectedGenus: 1 }, ctx).find((o) => o.rule === 'expected-genus')!;
		expect(g1.passed).toBe(false);
		expect(g1.measured).toBe('genus 0');
	});

	it('fills defaults and refuses nonsense in stored profiles', () => {
		expect(gateRulesSchema.parse({})).toEqual(DEFAULT_GATE_RULES);
		expect(() => gateRulesSchema.parse({ maxShells: -1 })).toThrow();
	});

	it('leaves the size rule off unless the profile sets a range, and refuses a range whose ends are swapped', () => {
		expect(evaluateGate(report('cube-closed.stl'), DEFAULT_GATE_RULES, ctx).some((o) => o.rule === 'expected-size')).toBe(false);
		expect(() => gateRulesSchema.parse({ expectedSize: { mode: 'absolute', min: 5, max: 1 } })).toThrow(/below the largest/);
	});
});

/** The unit cube's report, stretched to a body of the given bounding-box diagonal. */
function bodyOfDiagonal(diag: number): InspectionReport {
	const r = structuredClone(report('cube-closed.stl'));
	const side = diag / Math.sqrt(3);
	r.bbox = { min: [0, 0, 0], max: [side, side, side] };
	return r;
}
const sizeRule = (r: InspectionReport, rules: typeof D, c: { units: string; targetCellSize: number }) => evaluateGate(r, rules, c).find((o) => o.rule === 'expected-size')!;

// Unit factors from the definitions of the units (1 in = 25.4 mm and 1 ft = 304.8 mm exactly, by the
// 1959 international yard and pound agreement; 1 m = 1000 mm).
describe('the size and units rule (unit definitions: 1 in = 25.4 mm, 1 ft = 304.8 mm)', () => {
	const pods = { units: 'mm', targetCellSize: 2 };
	const bulbs = { units: 'm', targetCellSize: 0.005 };

	it('holds a 173 mm pod written in metres into a millimetre project and names ×1000 (m → mm), with the range derived from the cell size', () => {
		const rules = { ...D, expectedSize: { ...SIZE_IN_CELLS } };
		const o = sizeRule(bodyOfDiagonal(0.173), rules, pods);
		expect(o.passed).toBe(false);
		expect(o.severity).toBe('blocking');
		expect(o.limit).toBe('20 mm to 200,000 mm across (10 to 100,000 cells of 2 mm)');
		expect(o.measured).toBe('0.173 mm across; likely ×1,000 (m → mm)');
		expect(o.explanation).toContain('metres read as millimetres');
		expect(o.explanation).toContain('173 mm across');
		expect(scaleFix(bodyOfDiagonal(0.173), rules, pods)).toEqual({ factor: 1000, fileUnits: 'm', projectUnits: 'mm' });
	});

	it('holds a 1.2 m keel bulb written in millimetres into a metre project and names ×0.001 (mm → m)', () => {
		const rules = { ...D, expectedSize: { mode: 'absolute' as const, min: 0.2, max: 10 } };
		const o = sizeRule(bodyOfDiagonal(1200), rules, bulbs);
		expect(o.passed).toBe(false);
		expect(o.measured).toBe('1,200 m across; likely ×0.001 (mm → m)');
		expect(o.explanation).toContain('millimetres read as metres');
		expect(scaleFix(bodyOfDiagonal(1200), rules, bulbs)?.factor).toBe(0.001);
	});

	it('holds a 300 mm pod drawn in inches and names ×25.4 (in → mm), the factor nearest the middle of the range', () => {
		const rules = { ...D, expectedSize: { mode: 'absolute' as const, min: 50, max: 2000 } };
		// ×10 (cm) would also land inside the range, at 118 mm; ×25.4 lands nearer its middle (316 mm).
		const o = sizeRule(bodyOfDiagonal(300 / 25.4), rules, pods);
		expect(o.passed).toBe(false);
		expect(o.measured).toBe('11.81 mm across; likely ×25.4 (in → mm)');
		expect(likelyUnitFix(300 / 25.4, { min: 50, max: 2000 }, 'mm')).toEqual({ factor: 25.4, fileUnits: 'in', projectUnits: 'mm' });
	});

	it('passes a correctly scaled 173 mm pod and offers no rescale', () => {
		const rules = { ...D, expectedSize: { ...SIZE_IN_CELLS } };
		const o = sizeRule(bodyOfDiagonal(173), rules, pods);
		expect(o.passed).toBe(true);
		expect(o.measured).toBe('173 mm across');
		expect(scaleFix(bodyOfDiagonal(173), rules, pods)).toBeNull();
	});

	it('without a size rule, warns (does not hold) on a pod written in metres and points the short edges at the units', () => {
		// 173 mm pod read as 0.173 mm: 0.086 cells of 2 mm, and ×1,000 brings it to 87 cells.
		const r = bodyOfDiagonal(0.173);
		r.minEdgeLength = 0.0005;
		const out = evaluateGate(r, D, pods);
		const o = out.find((x) => x.rule === 'expected-size')!;
		expect(o.passed).toBe(false);
		expect(o.severity).toBe('warning');
		expect(o.measured).toBe('0.173 mm across (0.086 cells of 2 mm); likely ×1,000 (m → mm)');
		expect(o.limit).toBe('no size rule in this project');
		expect(o.explanation).toContain('does not hold the revision');
		expect(o.explanation).toContain('metres read as millimetres');
		expect(scaleFix(r, D, pods)).toEqual({ factor: 1000, fileUnits: 'm', projectUnits: 'mm' });
		const edge = out.find((x) => x.rule === 'min-edge-length')!;
		expect(edge.passed).toBe(false);
		expect(edge.explanation).toContain('unit mistake');
		expect(edge.explanation).toContain('0.5 mm, above the limit');
		// The warning alone never holds: only the short edges do here.
		expect(out.filter((x) => !x.passed && x.severity === 'blocking').map((x) => x.rule)).toEqual(['min-edge-length']);
	});

	it('without a size rule, warns on a keel bulb written in millimetres into a metre project (over 100,000 cells)', () => {
		// 240,000 cells of 5 mm; ×0.001 gives 240 cells, ×0.01 would give 2,400, farther from the usual few hundred.
		const o = sizeRule(bodyOfDiagonal(1200), D, bulbs);
		expect(o.severity).toBe('warning');
		expect(o.measured).toContain('likely ×0.001 (mm → m)');
	});

	it('without a size rule, says nothing of sizes a CFD case can use, even small ones', () => {
		for (const diag of [173, 1.732, 20_000]) expect(evaluateGate(bodyOfDiagonal(diag), D, pods).some((o) => o.rule === 'expected-size')).toBe(false);
		expect(scaleFix(bodyOfDiagonal(1.732), D, pods)).toBeNull();
	});

	it('says no usual unit factor explains a size that none of them brings into range', () => {
		const rules = { ...D, expectedSize: { mode: 'absolute' as const, min: 50, max: 2000 } };
		const o = sizeRule(bodyOfDiagonal(1e7), rules, pods);
		expect(o.passed).toBe(false);
		expect(o.measured).toBe('10,000 m across');
		expect(o.explanation).toContain('No usual unit factor explains it');
		expect(scaleFix(bodyOfDiagonal(1e7), rules, pods)).toBeNull();
	});
});

describe('advice that fits the mesh', () => {
	it('calls crossings between two shells overlapping bodies to unite, not a surface folding through itself', () => {
		// Two unit cubes, the second moved by (0.5, 0.5, 0.5): each closed, their surfaces cross.
		const r = inspectBytes(writeBinaryStl(concat(unitCube(), unitCube([0.5, 0.5, 0.5]))), 'two-cubes.stl');
		expect(r.selfIntersectingPairs).toBeGreaterThan(0);
		expect(r.selfIntersectionSample.every((x) => x.shells[0] !== x.shells[1])).toBe(true);
		expect(r.hints.map((h) => h.kind)).toEqual(['separate-bodies', 'overlapping-bodies']);
		// Not "if this is an assembly, that is expected": these bodies cross.
		expect(r.hints[0].message).not.toContain('that is expected');
		expect(r.hints[0].message).toContain('pass into each other');
		const o = evaluateGate(r, DEFAULT_GATE_RULES, ctx).find((x) => x.rule === 'no-self-intersections')!;
		expect(o.passed).toBe(false);
		expect(o.explanation).toContain('2 separate bodies pass into each other');
		expect(o.explanation).toContain('boolean union');
		expect(o.explanation).not.toContain('folds through itself');
		// The shell rule does not offer "raise the shell limit" for bodies that cross.
		const shells = evaluateGate(r, { ...DEFAULT_GATE_RULES, maxShells: 1 }, ctx).find((x) => x.rule === 'max-shells')!;
		expect(shells.passed).toBe(false);
		expect(shells.explanation).toContain('pass into each other');
		expect(shells.explanation).not.toContain('raise this project');
	});

	it('keeps the fold advice for a surface pushed through itself (one shell)', () => {
		const r = report('sphere-vertex-pushed-through.stl');
		expect(r.selfIntersectingPairs).toBeGreaterThan(0);
		expect(r.hints.map((h) => h.kind)).not.toContain('overlapping-bodies');
		const o = evaluateGate(r, DEFAULT_GATE_RULES, ctx).find((x) => x.rule === 'no-self-intersections')!;
		expect(o.explanation).toContain('folds through itself');
	});

	it('does not promise an orientation repair for a non-orientable (Möbius) surface', () => {
		const r = structuredClone(report('cube-closed.stl'));
		Object.assign(r, { orientable: false, consistentlyOriented: false, flippedFaces: 1, genus: null });
		const o = evaluateGate(r, DEFAULT_GATE_RULES, ctx).find((x) => x.rule === 'outward-oriented')!;
		expect(o.passed).toBe(false);
		expect(o.explanation).toContain('No repair can orient a non-orientable surface');
		expect(o.explanation).not.toContain('re-orient');
	});

	it('words extra shells by measured size: two equal blocks are separate bodies, not specks to drop', () => {
		const r = structuredClone(report('cube-closed.stl'));
		r.shells = [{ ...r.shells[0] }, { ...r.shells[0] }];
		r.components = 2;
		r.hints = r.hints.filter((h) => h.kind !== 'floating-shells');
		const o = evaluateGate(r, DEFAULT_GATE_RULES, ctx).find((x) => x.rule === 'max-shells')!;
		expect(o.passed).toBe(false);
		expect(o.explanation).toContain('make up 50 % of the area');
		expect(o.explanation).toContain('separate bodies');
		expect(o.explanation).not.toMatch(/implicit field|islands/);
	});
});

describe('walls and gaps against the cell size', () => {
	// Two 20 × 10 × 10 mm blocks 0.01 mm apart along x (scripts/make-fixtures.ts), in a 2 mm-cell
	// project. Analytic: gap 0.01 mm (float32 coordinates of the STL: 20.01 is stored to ~2e-7), walls 10 mm.
	const bytes = new Uint8Array(readFileSync('fixtures/blocks-0.01-apart.stl'));
	const r = inspectBytes(bytes, 'blocks-0.01-apart.stl', { cellSize: 2 });
	const rules = { ...DEFAULT_GATE_RULES, maxShells: 2, minWallGapCells: 2 };

	it('measures the gap and the walls of the two blocks', () => {
		const c = r.cellSizeChecks!;
		expect(Math.abs(c.narrowestGap!.value - 0.01)).toBeLessThan(1e-6);
		expect(c.narrowestGap!.cells).toBeCloseTo(0.005, 6);
		expect(c.thinnestWall!.value).toBeCloseTo(10, 9);
		expect(c.narrowGapFaces).toBe(4);
		expect(c.gapRegionCount).toBe(2);
	});

	it('holds the blocks with the gap, where it is, and what the mesher will do', () => {
		const out = evaluateGate(r, rules, ctx);
		const o = out.find((x) => x.rule === 'walls-and-gaps')!;
		expect(o.passed).toBe(false);
		expect(o.severity).toBe('blocking');
		expect(o.measured).toBe('thinnest wall 10 mm (5 cells); narrowest gap 0.01 mm (0.005 cells)');
		expect(o.limit).toBe('≥ 2 cells (4 mm)');
		expect(o.explanation).toMatch(/^The narrowest gap is 0\.01 mm, 0\.005 cells across, near \(20, .*bridges such a gap.*at least 4 mm apart/);
		expect(o.location!.points[0][0]).toBe(20);
		expect(o.location!.points[1][0]).toBeCloseTo(20.01, 6);
		expect(gatePasses(out)).toBe(false);
	});

	it('passes blocks far apart, and says not checked when nothing was measured', () => {
		expect(evaluateGate(r, { ...rules, minWallGapCells: 0.004 }, ctx).find((x) => x.rule === 'walls-and-gaps')!.passed).toBe(true);
		const unmeasured = evaluateGate({ ...r, cellSizeChecks: null }, rules, ctx).find((x) => x.rule === 'walls-and-gaps')!;
		expect(unmeasured.severity).toBe('warning');
		expect(unmeasured.measured).toBe('not measured');
		// The default profile leaves the rule off: stored profile versions keep their verdicts.
		expect(evaluateGate(r, DEFAULT_GATE_RULES, ctx).some((x) => x.rule === 'walls-and-gaps')).toBe(false);
	});
});
