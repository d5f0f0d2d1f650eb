import { describe, expect, it } from 'vitest';
import { mulberry32, sphere, towBody } from './testing/implicit-shapes';
import { gridFor, marchingCubes } from './testing/marching-cubes';
import { findSelfIntersections } from './self-intersect';
import { closeSelfIntersectPool, findSelfIntersectionsParallel, SelfIntersectPool, startSelfIntersections, warmSelfIntersectPool } from './self-intersect-node';

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
		const m = soup(11, 2000);
		const all = findSelfIntersections(m, { sampleLimit: 1e9 });
		expect(all.pairs).toBeGreaterThan(50);
		const par2 = await findSelfIntersectionsParallel(m, { threads: 2, sampleLimit: 1e9 });
		expect(par2.pairs).toBe(all.pairs);
		expect(par2.degenerateSkipped).toBe(all.degenerateSkipped);
		expect(par2.sample.map((s) => [s.a, s.b])).toEqual(all.sample.map((s) => [s.a, s.b]));
		const par3 = await findSelfIntersectionsParallel(m, { threads: 3, sampleLimit: 50 });
		expect(par3.pairs).toBe(all.pairs);
		expect(par3.sample.map((s) => [s.a, s.b])).toEqual(all.sample.slice(0, 50).map((s) => [s.a, s.b]));
	});

	it('finds no pairs on a closed marching-cubes tow body, like the single-threaded search', async () => {
		const s = towBody(1);
		const m = marchingCubes(s.field, gridFor(s.min, s.max, 0.04));
		const par = await findSelfIntersectionsParallel(m, { threads: 2 });
		expect(par.pairs).toBe(0);
	});

	it('uses buffers that already live in SharedArrayBuffers without copying them, same count (seed 12)', async () => {
		const m = soup(12, 2000);
		const positions = new Float64Array(new SharedArrayBuffer(m.positions.byteLength));
		positions.set(m.positions);
		const indices = new Uint32Array(new SharedArrayBuffer(m.indices.byteLength));
		indices.set(m.indices);
		const par = await findSelfIntersectionsParallel({ positions, indices }, { threads: 2 });
		expect(par.pairs).toBe(findSelfIntersections(m).pairs);
	});

	it('rejects malformed buffers with the same message as the single-threaded search', async () => {
		const bad = { positions: new Float64Array([0, 0, 0]), indices: new Uint32Array([0, 0, 7]) };
		await expect(findSelfIntersectionsParallel(bad, { threads: 2 })).rejects.toThrow(/refers to vertex 7/);
	});

	it('stops and rejects when cancelled', async () => {
		const s = sphere(1);
		const m = marchingCubes(s.field, gridFor(s.min, s.max, 0.01));
		const ctl = new AbortController();
		const run = findSelfIntersectionsParallel(m, { threads: 2, signal: ctl.signal });
		setTimeout(() => ctl.abort(), 20);
		await expect(run).rejects.toThrow(/cancelled/);
	});

	it('gives the single-threaded count on reused pool workers, on overlapping calls and after the pool was closed (seed 13)', async () => {
		const m = soup(13, 2000);
		const want = findSelfIntersections(m).pairs;
		warmSelfIntersectPool(2);
		const [x, y] = await Promise.all([findSelfIntersectionsParallel(m, { threads: 2 }), findSelfIntersectionsParallel(m, { threads: 2 })]);
		expect([x.pairs, y.pairs]).toEqual([want, want]);
		expect((await findSelfIntersectionsParallel(m, { threads: 2 })).pairs).toBe(want);
		await closeSelfIntersectPool();
		expect((await findSelfIntersectionsParallel(m, { threads: 3 })).pairs).toBe(want);
	});

	it('keeps each pool object to its own workers and lifetime (seed 18)', async () => {
		const m = soup(18, 1500);
		const want = findSelfIntersections(m).pairs;
		const a = new SelfIntersectPool(), b = new SelfIntersectPool();
		a.warm(2);
		b.warm(1);
		expect([a.size, b.size]).toEqual([2, 1]);
		expect((await a.start(m, { threads: 2 }).finish()).pairs).toBe(want);
		await b.close();
		expect([a.size, b.size]).toEqual([2, 0]);
		expect((await a.start(m, { threads: 2 }).finish()).pairs).toBe(want);
		expect((await b.start(m, { threads: 1 }).finish()).pairs).toBe(want);
		expect(b.size).toBe(1);
		await Promise.all([a.close(), b.close()]);
		expect([a.size, b.size]).toEqual([0, 0]);
	});

	it('keeps working after a cancelled call terminated the pool workers (seed 14)', async () => {
		const s = sphere(1);
		const big = marchingCubes(s.field, gridFor(s.min, s.max, 0.01));
		const ctl = new AbortController();
		const run = findSelfIntersectionsParallel(big, { threads: 2, signal: ctl.signal });
		setTimeout(() => ctl.abort(), 20);
		await expect(run).rejects.toThrow(/cancelled/);
		const m = soup(14, 1500);
		expect((await findSelfIntersectionsParallel(m, { threads: 2 })).pairs).toBe(findSelfIntersections(m).pairs);
	});

	it('gives the single-threaded counts and samples when pooled calls reuse shared buffers: large, then smaller, then larger again (seeds 15-17)', async () => {
		await closeSelfIntersectPool();
		for (const [seed, n] of [[15, 3000], [16, 800], [17, 4000]]) {
			const m = soup(seed, n);
			const want = findSelfIntersections(m, { sampleLimit: 1e9 });
			const got = await findSelfIntersectionsParallel(m, { threads: 2, sampleLimit: 1e9 });
			expect(got.pairs).toBe(want.pairs);
			expect(got.degenerateSkipped).toBe(want.degenerateSkipped);
			expect(got.sample.map((x) => [x.a, x.b])).toEqual(want.sample.map((x) => [x.a, x.b]));
		}
	});

	it('counts the same when the calling thread joins the traversal (help), on a marching-cubes sphere and a soup (seed 18)', async () => {
		const s = sphere(1);
		const big = marchingCubes(s.field, gridFor(s.min, s.max, 0.02));
		const soupMesh = soup(18, 3000);
		for (const m of [big, soupMesh]) {
			const want = findSelfIntersections(m, { sampleLimit: 1e9 });
			const run = startSelfIntersections(m, { threads: 1, sampleLimit: 1e9 });
			let helped = 0;
			const done = run.finish();
			let finished = false;
			void done.then(() => (finished = true), () => (finished = true));
			while (!finished && helped === 0) {
				helped += run.help();
				await new Promise((r) => setTimeout(r, 2));
			}
			const got = await done;
			expect(got.pairs).toBe(want.pairs);
			expect(got.sample.map((x) => [x.a, x.b])).toEqual(want.sample.map((x) => [x.a, x.b]));
			expect(got.stats!.candidatePairs).toBe(want.stats!.candidatePairs);
		}
	});

	it('counts crossing spheres as the single-threaded search does, passing over the same pairs at clear vertices, also after a mesh of other vertices reused the pool buffers', async () => {
		// Two marching-cubes spheres overlapping: most vertices clear, hundreds of counted pairs.
		const s = sphere(1);
		const a = marchingCubes(s.field, gridFor(s.min, s.max, 0.06));
		const b = marchingCubes((x, y, z) => s.field(x - 0.7, y, z), gridFor([-0.3, -1, -1], [1.7, 1, 1], 0.06));
		const va = a.positions.length / 3;
		const positions = new Float64Array(a.positions.length + b.positions.length);
		positions.set(a.positions);
		positions.set(b.positions, a.positions.length);
		const indices = new Uint32Array(a.indices.length + b.indices.length);
		indices.set(a.indices);
		for (let k = 0; k < b.indices.length; k++) indices[a.indices.length + k] = b.indices[k] + va;
		const crossing = { positions, indices };
		for (const m of [crossing, soup(19, 3000), crossing]) {
			const want = findSelfIntersections(m, { sampleLimit: 1e9 });
			for (const threads of [1, 2, 3]) {
				const got = await findSelfIntersectionsParallel(m, { threads, sampleLimit: 1e9 });
				expect(got.pairs).toBe(want.pairs);
				expect(got.sample.map((x) => [x.a, x.b])).toEqual(want.sample.map((x) => [x.a, x.b]));
				expect(got.stats!.clearSkips).toBe(want.stats!.clearSkips);
			}
		}
		const want = findSelfIntersections(crossing);
		expect(want.pairs).toBeGreaterThan(100);
		expect(want.stats!.clearSkips).toBeGreaterThan(want.stats!.candidatePairs / 2);
	});
});
