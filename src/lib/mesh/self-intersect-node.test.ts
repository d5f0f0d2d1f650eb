import { describe, expect, it } from 'vitest';
import { mulberry32, sphere, towBody } from './implicit-shapes';
import { gridFor, marchingCubes } from './marching-cubes';
import { findSelfIntersections } from './self-intersect';
import { findSelfIntersectionsParallel } from './self-intersect-node';

/** Small triangles scattered in a 12-unit box on a 1/8 grid; a third reuse a corner of the previous one. */
function soup(seed: number, triCount: number) {
	const rnd = mulberry32(seed);
	const q = (x: number) => Math.round(x * 8) / 8;
	const pts: number[] = [];
	const idx: number[] = [];
	for (let t = 0; t < triCount; t++) {
		const cx = rnd() * 12, cy = rnd() * 12, cz = rnd() * 12;
		const corner = () => {
			pts.push(q(cx + 2 * rnd() - 1), q(cy + 2 * rnd() - 1), q(cz + 2 * rnd() - 1));
			return pts.length / 3 - 1;
		};
		const a = t > 0 && rnd() < 0.33 ? idx[idx.length - 1] : corner();
		idx.push(a, corner(), corner());
	}
	return { positions: Float64Array.from(pts), indices: Uint32Array.from(idx) };
}

describe('findSelfIntersectionsParallel', () => {
	it('gives the same pair count and samples as the single-threaded search on a random soup, seed 11', async () => {
		const m = soup(11, 3000);
		const one = findSelfIntersections(m, { sampleLimit: 50 });
		expect(one.pairs).toBeGreaterThan(50);
		for (const threads of [1, 2, 3]) {
			const par = await findSelfIntersectionsParallel(m, { threads, sampleLimit: 50 });
			expect(par.pairs).toBe(one.pairs);
			expect(par.degenerateSkipped).toBe(one.degenerateSkipped);
			expect(par.sample.length).toBe(50);
		}
		const all = findSelfIntersections(m, { sampleLimit: 1e9 });
		const parAll = await findSelfIntersectionsParallel(m, { threads: 2, sampleLimit: 1e9 });
		expect(parAll.sample.map((s) => [s.a, s.b])).toEqual(all.sample.map((s) => [s.a, s.b]));
	});

	it('finds no pairs on a closed marching-cubes tow body, like the single-threaded search', async () => {
		const s = towBody(1);
		const m = marchingCubes(s.field, gridFor(s.min, s.max, 0.04));
		const par = await findSelfIntersectionsParallel(m, { threads: 2 });
		expect(par.pairs).toBe(0);
	});

	it('stops and rejects when cancelled', async () => {
		const s = sphere(1);
		const m = marchingCubes(s.field, gridFor(s.min, s.max, 0.01));
		const ctl = new AbortController();
		const run = findSelfIntersectionsParallel(m, { threads: 2, signal: ctl.signal });
		setTimeout(() => ctl.abort(), 20);
		await expect(run).rejects.toThrow(/cancelled/);
	});
});
