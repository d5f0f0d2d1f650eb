import { describe, expect, it } from 'vitest';
import { buildBvh, f32Down, f32Up, sortByCode, sortByCodeInto } from './bvh';
import { sortLiveFaces, sortLiveFacesInto } from './self-intersect';
import { mulberry32 } from './testing/implicit-shapes';

describe('flat BVH', () => {
	it('rounds to float32 outward: f32Down(x) ≤ x ≤ f32Up(x), both float32 (seed 5)', () => {
		const rnd = mulberry32(5);
		const xs = [0, -0, 1e-45, -1e-45, 1e-40, 0.1, -0.1, 1 / 3, 2 ** 24 + 1, -(2 ** 30) - 3, 1e30];
		for (let k = 0; k < 2000; k++) xs.push((rnd() - 0.5) * 10 ** Math.floor(rnd() * 20 - 10));
		for (const x of xs) {
			const lo = f32Down(x), hi = f32Up(x);
			expect(lo <= x && x <= hi).toBe(true);
			expect(Math.fround(lo)).toBe(lo);
			expect(Math.fround(hi)).toBe(hi);
		}
	});

	it('puts every item in exactly one leaf whose bounds and ancestors contain its box (seed 6)', () => {
		const rnd = mulberry32(6);
		const n = 5000;
		const boxes = new Float64Array(6 * n);
		for (let i = 0; i < n; i++) {
			for (let d = 0; d < 3; d++) {
				const c = rnd() * 100, h = rnd();
				boxes[6 * i + d] = c - h;
				boxes[6 * i + 3 + d] = c + h;
			}
		}
		const bvh = buildBvh(boxes, n, 4);
		const seen = new Uint8Array(n);
		const contains = (node: number, item: number) => [0, 1, 2].every((d) => bvh.bounds[6 * node + d] <= boxes[6 * item + d] && boxes[6 * item + 3 + d] <= bvh.bounds[6 * node + 3 + d]);
		const walk = (node: number, path: number[]) => {
			const fc = bvh.firstChild[node];
			if (fc < 0) {
				expect(bvh.count[node]).toBeLessThanOrEqual(4);
				for (let k = bvh.start[node]; k < bvh.start[node] + bvh.count[node]; k++) {
					const item = bvh.order[k];
					seen[item]++;
					for (const p of [...path, node]) expect(contains(p, item)).toBe(true);
				}
			} else {
				walk(fc, [...path, node]);
				walk(fc + 1, [...path, node]);
			}
		};
		walk(0, []);
		expect(seen.every((s) => s === 1)).toBe(true);
	});

	it('sorts into caller-owned arrays in the same stable order as sortByCode, with and without dead faces (seed 6)', () => {
		const rnd = mulberry32(6);
		const n = 5000;
		// Few distinct codes, so stability (ties in input order) is exercised.
		const codes = Uint32Array.from({ length: n }, () => Math.floor(rnd() * 300) * 3_000_001);
		const want = sortByCode(codes);
		const outC = new Uint32Array(n), outO = new Uint32Array(n), tmpC = new Uint32Array(n), tmpO = new Uint32Array(n);
		sortByCodeInto(codes, null, n, outC, outO, tmpC, tmpO);
		expect(Array.from(outC)).toEqual(Array.from(want.codes));
		expect(Array.from(outO)).toEqual(Array.from(want.order));
		for (const deadShare of [0, 0.2]) {
			const live = Uint8Array.from({ length: n }, () => (rnd() < deadShare ? 0 : 1));
			const ref = sortLiveFaces(live, codes, n);
			const sc = new Uint32Array(n), sf = new Uint32Array(n);
			const liveCount = sortLiveFacesInto(live, codes, n, sc, sf, new Uint32Array(n), new Uint32Array(n));
			expect(liveCount).toBe(ref.slotFace.length);
			expect(Array.from(sc.subarray(0, liveCount))).toEqual(Array.from(ref.codes));
			expect(Array.from(sf.subarray(0, liveCount))).toEqual(Array.from(ref.slotFace));
		}
	});
});
