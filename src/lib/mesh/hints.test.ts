/**
 * Hints on constructed meshes that stand for the everyday cases: a flat sheet with a hole, an open
 * CAD box, a tessellated cylinder without its cap, a grid-sampled surface cut by its sampling box,
 * assemblies of equal bodies, a body with specks, unwelded seams, slivers on a flat part. Each case
 * asserts whether a hint fires and what it says.
 */
import { describe, expect, it } from 'vitest';
import { buildReport } from './build-report';
import { inspectBytes } from './inspect';
import { marchingCubes } from './testing/marching-cubes';
import { sphere } from './testing/implicit-shapes';
import { asParsed, concat, icosphere, torus, unitCube, voxelSurface, withoutFaces } from './testing/test-meshes';
import { writeObj, writePly } from './write';
import type { HintKind, InspectionReport } from './report-types';
import type { MeshBuffers } from './types';

const kinds = (r: InspectionReport) => r.hints.map((h) => h.kind);
const hint = (r: InspectionReport, k: HintKind) => r.hints.find((h) => h.kind === k);

/** n × n unit squares in the plane z = 0, without the squares listed as [i, j]. */
function flatSheet(n: number, without: [number, number][] = []): MeshBuffers {
	const pos: number[] = [];
	for (let j = 0; j <= n; j++) for (let i = 0; i <= n; i++) pos.push(i, j, 0);
	const idx: number[] = [];
	const gone = new Set(without.map(([i, j]) => `${i},${j}`));
	for (let j = 0; j < n; j++) {
		for (let i = 0; i < n; i++) {
			if (gone.has(`${i},${j}`)) continue;
			const a = j * (n + 1) + i, b = a + 1, c = a + n + 1, d = c + 1;
			idx.push(a, b, d, a, d, c);
		}
	}
	return { positions: Float64Array.from(pos), indices: Uint32Array.from(idx) };
}

/** Closed cylinder of n even segments around z (radius 1, height h), side and both caps as fans. */
function cylinder(n: number, caps: { bottom: boolean; top: boolean }, h = 2): MeshBuffers {
	const pos: number[] = [];
	for (let i = 0; i < n; i++) {
		const a = (2 * Math.PI * i) / n;
		pos.push(Math.cos(a), Math.sin(a), 0, Math.cos(a), Math.sin(a), h);
	}
	const bc = pos.length / 3;
	pos.push(0, 0, 0);
	const tc = pos.length / 3;
	pos.push(0, 0, h);
	const idx: number[] = [];
	for (let i = 0; i < n; i++) {
		const b0 = 2 * i, t0 = b0 + 1, b1 = (2 * (i + 1)) % (2 * n), t1 = b1 + 1;
		idx.push(b0, b1, t1, b0, t1, t0);
		if (caps.bottom) idx.push(bc, b1, b0);
		if (caps.top) idx.push(tc, t0, t1);
	}
	return { positions: Float64Array.from(pos), indices: Uint32Array.from(idx) };
}

function scaled(m: MeshBuffers, k: number, offset: [number, number, number]): MeshBuffers {
	const p = Float64Array.from(m.positions);
	for (let i = 0; i < p.length; i++) p[i] = p[i] * k + offset[i % 3];
	return { positions: p, indices: m.indices };
}

/** Gives every vertex used by faces [from, to) its own copy: an indexed file whose seam is not welded. */
function unweldFaces(m: MeshBuffers, from: number, to: number): MeshBuffers {
	const pos = Array.from(m.positions);
	const idx = Uint32Array.from(m.indices);
	const copy = new Map<number, number>();
	for (let c = 3 * from; c < 3 * to; c++) {
		const v = idx[c];
		let w = copy.get(v);
		if (w === undefined) {
			w = pos.length / 3;
			pos.push(m.positions[3 * v], m.positions[3 * v + 1], m.positions[3 * v + 2]);
			copy.set(v, w);
		}
		idx[c] = w;
	}
	return { positions: Float64Array.from(pos), indices: idx };
}

describe('openings: a sampling-box cut only with the evidence for it', () => {
	it('calls a flat sheet with a hole a flat surface, not a cut', () => {
		const r = buildReport(asParsed(flatSheet(6, [[2, 2], [3, 2], [2, 3], [3, 3]])));
		expect(r.boundaryLoops).toBe(2);
		// Both rims lie in the z-min (= z-max) plane of the bbox: the old rule called them clipped.
		expect(r.holes.every((h) => h.onBboxPlane === 'z-min')).toBe(true);
		expect(kinds(r)).not.toContain('clipped-by-bbox-plane');
		expect(hint(r, 'flat-surface')?.message).toMatch(/flat \(no extent along z\).*2 rims.*encloses no volume/);
		expect(r.volume).toBeNull();
	});

	it('says an open CAD box has an opening with few corners, not that it was cut off', () => {
		// Unit cube without its two x = 1 triangles: one square opening on the x-max plane.
		const cube = unitCube();
		const xMax = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11].filter((f) => [0, 1, 2].every((k) => cube.positions[3 * cube.indices[3 * f + k]] === 1));
		expect(xMax).toHaveLength(2);
		const r = buildReport(asParsed(withoutFaces(cube, xMax)));
		expect(r.holes[0].onBboxPlane).toBe('x-max');
		expect(r.holes[0].corners).toBe(4);
		expect(kinds(r)).not.toContain('clipped-by-bbox-plane');
		expect(hint(r, 'openings')?.message).toMatch(/^The surface has 1 opening \(largest rim 4 units, 4 units in all\).*few corners, as where a flat face is missing/);
		// Given the project's unit, every length in the texts carries it.
		const mm = buildReport(asParsed(withoutFaces(cube, xMax)), { units: 'mm', minEdgeLength: 1.5 });
		expect(hint(mm, 'openings')?.message).toMatch(/largest rim 4 mm, 4 mm in all/);
		expect(hint(mm, 'short-edges')?.message).toMatch(/shorter than the target length 1\.5 mm;/);
		// Small and everyday meshes get the slabs (no cell size to state).
		expect(mm.projectedArea.flow.method).toMatch(/integrated over horizontal slabs/);
		const sphereMm = buildReport(asParsed(icosphere(4)), { units: 'mm' });
		expect(sphereMm.projectedArea.flow.method).toMatch(/integrated over horizontal slabs/);
		// Volume is not defined for an open surface (the old report gave a number for it).
		expect(r.volume).toBeNull();
		expect(r.volumeUndefinedReason).toBe('open');
		expect(r.wettedArea).toBeNull();
	});

	it('does not call the missing top of a finely divided box a cut (straight sides, however many edges)', () => {
		const box = voxelSurface(4, 4, 4, () => true);
		const top: number[] = [];
		for (let f = 0; f < box.indices.length / 3; f++) if ([0, 1, 2].every((k) => box.positions[3 * box.indices[3 * f + k] + 2] === 4)) top.push(f);
		const r = buildReport(asParsed(withoutFaces(box, top)));
		expect(r.boundaryLoops).toBe(1);
		expect(r.holes[0].edgeCount).toBe(16);
		expect(r.holes[0].straightShare).toBeGreaterThan(0.5);
		expect(kinds(r)).not.toContain('clipped-by-bbox-plane');
		expect(kinds(r)).toContain('openings');
	});

	it('does not call a tessellated cylinder without its top cap a cut (evenly divided rim)', () => {
		const r = buildReport(asParsed(cylinder(64, { bottom: true, top: false })));
		expect(r.holes[0].onBboxPlane).toBe('z-max');
		expect(r.holes[0].edgeLengthSpread).toBeLessThan(1e-9);
		expect(kinds(r)).not.toContain('clipped-by-bbox-plane');
		expect(hint(r, 'openings')?.count).toBe(1);
	});

	it('does call a grid-sampled sphere cut by its sampling box a cut, on all six planes', () => {
		const m = marchingCubes(sphere(1).field, { min: [-0.8, -0.8, -0.8], cell: 0.05, cells: [32, 32, 32] });
		const r = buildReport(asParsed(m));
		const h = hint(r, 'clipped-by-bbox-plane');
		expect(h?.count).toBe(6);
		expect(h?.message).toMatch(/x-max, x-min, y-max, y-min, z-max, z-min/);
		expect(kinds(r)).not.toContain('openings');
	});
});

describe('separate pieces: specks are advised away, bodies are only counted', () => {
	it('reports two equal blocks 0.01 apart as two bodies, with no removal advice and no guessed origin', () => {
		const r = buildReport(asParsed(concat(unitCube(), unitCube([1.01, 0, 0]))));
		expect(kinds(r)).toEqual(['separate-bodies']);
		const m = hint(r, 'separate-bodies')!.message;
		expect(m).toMatch(/^The mesh is made of 2 separate bodies.*largest holds 50\.0 % of the area/);
		expect(m).not.toMatch(/remov|implicit|field|island/i);
	});

	it('gives no removal advice for an assembly of 101 pieces that together hold a sixth of the area', () => {
		// One sphere of radius 1 and 100 of radius 0.046: each small one is 0.2 % of the area,
		// together 17 % (as the wings of a model made of many parts).
		const big = icosphere(3);
		const small = icosphere(1, 0.046);
		const parts = [big];
		for (let i = 0; i < 100; i++) parts.push(scaled(small, 1, [3 + (i % 10) * 0.2, Math.floor(i / 10) * 0.2, 0]));
		const r = buildReport(asParsed(concat(...parts)));
		expect(r.components).toBe(101);
		expect(kinds(r)).not.toContain('floating-shells');
		const h = hint(r, 'separate-bodies')!;
		expect(h.count).toBe(101);
		expect(h.areaShare!).toBeGreaterThan(0.15);
		expect(h.areaShare!).toBeLessThan(0.2);
	});

	it('gives no removal advice for a model of 26 separate bones of different sizes', () => {
		const parts: MeshBuffers[] = [];
		for (let i = 0; i < 26; i++) parts.push(scaled(icosphere(2), 0.2 + 0.03 * i, [3 * i, 0, 0]));
		const r = buildReport(asParsed(concat(...parts)));
		expect(kinds(r)).toEqual(['separate-bodies']);
		expect(hint(r, 'separate-bodies')!.count).toBe(26);
	});

	it('advises removing three specks beside a body, with what removal changes', () => {
		const speck = scaled(unitCube(), 0.02, [0, 0, 0]);
		const r = buildReport(asParsed(concat(icosphere(4), scaled(speck, 1, [2, 0, 0]), scaled(speck, 1, [2.5, 0, 0]), scaled(speck, 1, [3, 0, 0]))));
		expect(r.components).toBe(4);
		expect(kinds(r)).toEqual(['floating-shells']);
		const h = hint(r, 'floating-shells')!;
		expect(h.count).toBe(3);
		expect(h.message).toMatch(/^3 small loose pieces float apart from the main surface: .* and 36 faces together.*Removing them changes the area by/);
		expect(h.areaShare!).toBeCloseTo((3 * 6 * 0.0004) / (3 * 6 * 0.0004 + buildReport(asParsed(icosphere(4))).area), 12);
	});
});

describe('unwelded seams', () => {
	// A torus written as OBJ whose second half has its own copies of every vertex: two open halves
	// joined only by coincident positions, as an exporter that writes per-patch vertices leaves it.
	const t = torus(48, 16);
	const half = t.indices.length / 6;
	const seamed = unweldFaces(t, half, t.indices.length / 3);

	for (const [name, bytes] of [
		['OBJ', writeObj(seamed)],
		['binary PLY', writePly(seamed, 'binary-le')]
	] as const) {
		it(`says first, for ${name}, that the seams are not welded and what an exact weld would give`, () => {
			const r = inspectBytes(bytes, 'seamed.' + (name === 'OBJ' ? 'obj' : 'ply'));
			expect(r.duplicatePositions).toBeGreaterThan(0);
			expect(r.components).toBe(2);
			expect(r.boundaryEdges).toBeGreaterThan(0);
			expect(r.exactWeld).toEqual({
				coincidentVertices: r.duplicatePositions,
				boundaryEdges: 0,
				boundaryLoops: 0,
				shells: 1,
				nonManifoldEdges: 0,
				genus: 1,
				watertight: true
			});
			expect(r.hints[0].kind).toBe('unwelded-seams');
			// The weld explains the shells and the openings, so neither is told again as a cause of its own.
			expect(kinds(r)).toEqual(['unwelded-seams']);
			expect(r.hints[0].message).toMatch(
				new RegExp(`^The seams are not welded: ${r.duplicatePositions.toLocaleString('en-US')} vertices sit at exactly the position of another vertex.*would leave 0 boundary edges \\(now ${r.boundaryEdges.toLocaleString('en-US')}\\) and 1 shell \\(now 2\\)\\. It would then be closed with genus 1\\. Faces that meet only along such a seam`)
			);
		});
	}

	it('is silent for the same torus welded, and for an STL (the reader welds STL corners)', () => {
		expect(kinds(inspectBytes(writeObj(t), 't.obj'))).not.toContain('unwelded-seams');
		expect(inspectBytes(writeObj(t), 't.obj').exactWeld).toBeNull();
	});

	it('stays silent when coincident vertices change nothing (two bodies touching at one corner point)', () => {
		const a = unitCube(), b = unitCube([1, 1, 1]);
		const r = inspectBytes(writeObj(concat(a, b)), 'touch.obj');
		expect(r.exactWeld?.coincidentVertices).toBe(1);
		expect(kinds(r)).not.toContain('unwelded-seams');
	});
});

describe('slivers are described by what is measured', () => {
	it('does not name marching cubes as the cause on a flat CAD-like fan of needles', () => {
		const p: number[] = [0, 0, 0];
		for (let i = 0; i < 12; i++) p.push(10 * Math.cos((0.01 * i) / 10), 10 * Math.sin((0.01 * i) / 10), 0);
		const idx: number[] = [];
		for (let i = 0; i + 1 < 12; i++) idx.push(0, 1 + i, 2 + i);
		const r = buildReport(asParsed({ positions: Float64Array.from(p), indices: Uint32Array.from(idx) }));
		const h = hint(r, 'sliver-cluster')!;
		expect(h.message).toMatch(/^1 patch of needle-thin triangles \(11 faces with radius ratio below 0\.05/);
		expect(h.message).not.toMatch(/marching|cubes|generator|implicit/i);
	});
});

describe('slivers: merge vertices only where they nearly coincide', () => {
	// Common practice: collapsing an edge moves the surface by up to half its length, so it is the
	// remedy for an edge that is tiny against the part, never for a long strip of the right shape.
	it('calls the side strips of a tessellated cylinder long, thin strips to remesh, not vertices to merge', () => {
		const r = buildReport(asParsed(cylinder(64, { bottom: true, top: true }, 7.5)));
		expect(r.watertight).toBe(true);
		const h = hint(r, 'sliver-cluster')!;
		expect(h.message).toMatch(/long, thin strips/);
		expect(h.message).toMatch(/Remesh the surface/);
		expect(h.message).not.toMatch(/merging/);
	});

	it('advises merging on a fan of needles whose short edges are tiny against the part', () => {
		const p: number[] = [0, 0, 0];
		for (let i = 0; i < 12; i++) p.push(10 * Math.cos(1e-5 * i), 10 * Math.sin(1e-5 * i), 0);
		const idx: number[] = [];
		for (let i = 0; i + 1 < 12; i++) idx.push(0, 1 + i, 2 + i);
		const h = hint(buildReport(asParsed({ positions: Float64Array.from(p), indices: Uint32Array.from(idx) })), 'sliver-cluster')!;
		expect(h.message).toMatch(/Each has an edge under .*merging those nearly coincident vertices/);
		expect(h.message).not.toMatch(/strip/);
	});
});
