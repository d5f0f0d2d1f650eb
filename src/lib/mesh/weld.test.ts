import { describe, expect, it } from 'vitest';
import { mulberry32 as rng } from './testing/implicit-shapes';
import { countDuplicatePositions, weldFloat32Bits, weldFloat64 } from './weld';


/** Brute-force oracle: first-appearance ids by a string key per corner. */
function oracle(c: Float64Array): { ids: number[]; count: number } {
	const seen = new Map<string, number>();
	const ids: number[] = [];
	for (let i = 0; i < c.length / 3; i++) {
		const k = `${c[3 * i] + 0},${c[3 * i + 1] + 0},${c[3 * i + 2] + 0}`;
		if (!seen.has(k)) seen.set(k, seen.size);
		ids.push(seen.get(k)!);
	}
	return { ids, count: seen.size };
}

describe('weldFloat64', () => {
	it('merges a cube soup of 36 corners into 8 vertices and reports 28 merged records', () => {
		const q = [0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0, 0, 0, 1, 1, 0, 1, 1, 1, 1, 0, 1, 1];
		const ix = [0, 3, 2, 0, 2, 1, 4, 5, 6, 4, 6, 7, 0, 1, 5, 0, 5, 4, 1, 2, 6, 1, 6, 5, 2, 3, 7, 2, 7, 6, 3, 0, 4, 3, 4, 7];
		const corners = new Float64Array(ix.flatMap((v) => [q[3 * v], q[3 * v + 1], q[3 * v + 2]]));
		const w = weldFloat64(corners, 36);
		expect(w.vertCount).toBe(8);
		expect(w.weldedVertices).toBe(28);
		for (let c = 0; c < 36; c++) for (let k = 0; k < 3; k++) expect(w.positions[3 * w.indices[c] + k]).toBe(corners[3 * c + k]);
	});

	it('treats -0 as +0 and keeps values one ulp apart distinct', () => {
		const w = weldFloat64(new Float64Array([-0, 0, 1, 0, -0, 1, 0, 0, 1 + Number.EPSILON]), 3);
		expect(w.vertCount).toBe(2);
		expect(Object.is(w.positions[0], 0)).toBe(true);
	});

	it('agrees with a string-key brute-force oracle on seeded random corners (seed 7)', () => {
		const r = rng(7);
		const pool = Array.from({ length: 300 }, () => [r() * 10 - 5, r() < 0.1 ? -0 : r(), r() < 0.5 ? 0 : r() * 1e-300]);
		const corners = new Float64Array(9000);
		for (let i = 0; i < 3000; i++) corners.set(pool[Math.floor(r() * pool.length)], 3 * i);
		const w = weldFloat64(corners, 3000);
		const o = oracle(corners);
		expect(w.vertCount).toBe(o.count);
		expect(Array.from(w.indices)).toEqual(o.ids);
	});
});

describe('weldFloat32Bits', () => {
	it('agrees with the string-key oracle on seeded random float32 corners, across table growth (seed 11)', () => {
		const r = rng(11);
		const n = 20000;
		const pool = Array.from({ length: 6000 }, () => [Math.fround(r()), Math.fround(r() * 3), r() < 0.3 ? 0 : Math.fround(-r())]);
		const f = new Float32Array(3 * n);
		for (let i = 0; i < n; i++) f.set(pool[Math.floor(r() * pool.length)], 3 * i);
		const w = weldFloat32Bits(new Uint32Array(f.buffer), n);
		const o = oracle(new Float64Array(f));
		expect(w.vertCount).toBe(o.count);
		expect(Array.from(w.indices)).toEqual(o.ids);
		let mismatched = 0;
		for (let c = 0; c < n; c++) for (let k = 0; k < 3; k++) if (w.positions[3 * w.indices[c] + k] !== f[3 * c + k]) mismatched++;
		expect(mismatched).toBe(0);
	});
});

describe('countDuplicatePositions', () => {
	it('counts indices that repeat an earlier position', () => {
		expect(countDuplicatePositions(new Float64Array([0, 0, 0, 1, 0, 0, 0, 0, 0, 0, 0, 0, 1, 0, 0]), 5)).toBe(3);
		expect(countDuplicatePositions(new Float64Array(0), 0)).toBe(0);
	});
});
