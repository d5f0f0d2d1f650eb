/**
 * T-junction slits: a unit cube whose top face has a vertex in the middle of its edge with the front
 * face, which does not have it, and a plate of 2 × 2 squares against a single long side face. The
 * expected result is the closed cube again (Euler–Poincaré: V − E + F = 2, genus 0) with the exact
 * volume 1 and area 6, no vertex moved, and a mesh without slits left unchanged.
 */
import { describe, expect, it } from 'vitest';
import { splitTJunctions } from './split-t-junctions';
import { applyRecipe, STANDARD_RECIPE } from './recipe';
import { inspect } from '../testing/repair-support';
import { unitCube } from '../testing/test-meshes';
import type { MeshBuffers } from '../types';

/** Unit cube with the top face (z = 1) split at m = (0.5, 0, 1), a vertex the front face's edge lacks. */
function tJunctionCube(): MeshBuffers {
	const V: number[][] = [[0, 0, 0], [1, 0, 0], [1, 1, 0], [0, 1, 0], [0, 0, 1], [1, 0, 1], [1, 1, 1], [0, 1, 1], [0.5, 0, 1]];
	const f = [
		[0, 3, 2], [0, 2, 1], // bottom, facing −z
		[0, 1, 5], [0, 5, 4], // front y = 0: edge 4–5 without vertex 8
		[3, 7, 6], [3, 6, 2], // back
		[0, 4, 7], [0, 7, 3], // left
		[1, 2, 6], [1, 6, 5], // right
		[4, 8, 7], [8, 6, 7], [8, 5, 6] // top, with vertex 8 on its front edge
	];
	return { positions: Float64Array.from(V.flat()), indices: Uint32Array.from(f.flat()) };
}

describe('splitTJunctions', () => {
	it('closes the slit of a T-junction cube without moving a vertex', () => {
		const m = tJunctionCube();
		const before = inspect(m);
		expect(before.watertight).toBe(false);
		expect(before.holes).toHaveLength(1);
		expect(before.holes[0].area).toBe(0);
		expect(before.hints.map((h) => h.kind)).toContain('zero-width-openings');
		expect(before.hints.map((h) => h.kind)).not.toContain('openings');
		const r = splitTJunctions(m, 1e-9);
		expect(r.counts).toEqual({ edgesSplit: 1, junctions: 1, facesAdded: 1 });
		expect([...r.mesh.positions]).toEqual([...m.positions]);
		const after = inspect(r.mesh);
		expect(after.watertight).toBe(true);
		expect(after.eulerCharacteristic).toBe(2);
		expect(after.genus).toBe(0);
		expect(after.consistentlyOriented).toBe(true);
		expect(after.selfIntersectingPairs).toBe(0);
		expect(after.volume).toBeCloseTo(1, 14);
		expect(after.area).toBeCloseTo(6, 14);
	});

	it('is part of the standard recipe, which then fills nothing', () => {
		const { mesh, log } = applyRecipe(tJunctionCube(), STANDARD_RECIPE(0.1));
		expect(log.find((e) => e.op === 'split-t-junctions')?.counts).toMatchObject({ junctions: 1 });
		expect(log.find((e) => e.op === 'fill-holes')?.counts).toMatchObject({ holesFilled: 0 });
		expect(inspect(mesh).watertight).toBe(true);
	});

	it('splits one edge at several vertices in order along it', () => {
		// A cube whose top face is a strip of three squares' worth of vertices along the front edge.
		const m = tJunctionCube();
		const p = Float64Array.from([...m.positions, 0.25, 0, 1, 0.75, 0, 1]); // 9 and 10
		const idx = [...m.indices].slice(0, 30);
		idx.push(4, 9, 7, 9, 8, 7, 8, 10, 6, 8, 6, 7, 10, 5, 6);
		const r = splitTJunctions({ positions: p, indices: Uint32Array.from(idx) }, 1e-9);
		expect(r.counts.junctions).toBe(3);
		const after = inspect(r.mesh);
		expect(after.watertight).toBe(true);
		expect(after.volume).toBeCloseTo(1, 14);
	});

	it('leaves a closed mesh and a real opening as they are', () => {
		const c = unitCube();
		expect(splitTJunctions(c, 1e-6).counts.junctions).toBe(0);
		const open = { positions: c.positions, indices: c.indices.slice(0, 30) };
		const r = splitTJunctions(open, 1e-6);
		expect(r.counts.junctions).toBe(0);
		expect([...r.mesh.indices]).toEqual([...open.indices]);
		expect(inspect(open).hints.map((h) => h.kind)).toContain('openings');
	});
});
