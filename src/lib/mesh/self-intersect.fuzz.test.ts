// Property tests of the self-intersection count on small generated meshes with real vertex fans
// (grids, stars winding once or twice, perturbed spheres, welded and doubled faces): the count
// must equal the brute-force all-pairs separating-axis oracle (testing/self-intersect-oracle.ts,
// exact on integer coordinates), and passing over pairs at clear vertices (vertex-fans.ts) must
// change no count on float coordinates either.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { findInPrepared, findSelfIntersections, prepareMesh } from './self-intersect';
import { oracleCount } from './testing/self-intersect-oracle';
import { icosphere } from './testing/test-meshes';
import type { MeshBuffers } from './types';

interface Soup {
	pts: number[][];
	tris: number[][];
}

const toMesh = (s: Soup): MeshBuffers => ({ positions: Float64Array.from(s.pts.flat()), indices: Uint32Array.from(s.tris.flat()) });

/** n × n grid on spacing 8, each vertex moved by (jx, jy, h); per cell a diagonal choice. Folds where jitter exceeds the spacing. */
const gridArb = fc
	.integer({ min: 3, max: 6 })
	.chain((n) =>
		fc.record({
			n: fc.constant(n),
			jit: fc.array(fc.tuple(fc.integer({ min: -12, max: 12 }), fc.integer({ min: -12, max: 12 }), fc.integer({ min: -3, max: 3 })), { minLength: n * n, maxLength: n * n }),
			still: fc.double({ min: 0, max: 1, noNaN: true }),
			diag: fc.array(fc.boolean(), { minLength: (n - 1) * (n - 1), maxLength: (n - 1) * (n - 1) })
		})
	)
	.map(({ n, jit, still, diag }): Soup => {
		const pts: number[][] = [];
		for (let j = 0; j < n; j++)
			for (let i = 0; i < n; i++) {
				const [jx, jy, h] = jit[j * n + i];
				// Some grids keep most vertices in place: flat fans with exactly collinear link vertices.
				const keep = (j * n + i) / (n * n) < still;
				pts.push(keep ? [8 * i, 8 * j, 0] : [8 * i + jx, 8 * j + jy, h]);
			}
		const tris: number[][] = [];
		for (let j = 0; j + 1 < n; j++)
			for (let i = 0; i + 1 < n; i++) {
				const a = j * n + i, b = a + 1, c = a + n, d = c + 1;
				if (diag[j * (n - 1) + i]) tris.push([a, b, d], [a, d, c]);
				else tris.push([a, b, c], [b, d, c]);
			}
		return { pts, tris };
	});

/** A closed fan of k faces around vertex 0 whose link winds `turns` times round it. */
const starArb = fc
	.integer({ min: 3, max: 11 })
	.chain((k) =>
		fc.record({
			k: fc.constant(k),
			turns: fc.integer({ min: 1, max: 2 }),
			hub: fc.integer({ min: -6, max: 6 }),
			link: fc.array(fc.tuple(fc.integer({ min: 4, max: 60 }), fc.integer({ min: -8, max: 8 })), { minLength: k, maxLength: k }),
			flip: fc.array(fc.boolean(), { minLength: k, maxLength: k })
		})
	)
	.map(({ k, turns, hub, link, flip }): Soup => {
		const pts: number[][] = [[0, 0, hub]];
		for (let t = 0; t < k; t++) {
			const [r, z] = link[t];
			const a = (2 * Math.PI * turns * t) / k;
			pts.push([Math.round(r * Math.cos(a)), Math.round(r * Math.sin(a)), z]);
		}
		const tris: number[][] = [];
		for (let t = 0; t < k; t++) {
			const u = 1 + t, w = 1 + ((t + 1) % k);
			tris.push(flip[t] ? [0, w, u] : [0, u, w]);
		}
		return { pts, tris };
	});

/** A subdivided icosahedron of radius 200 on integer coordinates with some vertices pushed around. */
const sphereArb = fc
	.record({
		level: fc.integer({ min: 0, max: 1 }),
		pushes: fc.array(fc.tuple(fc.nat(), fc.integer({ min: -150, max: 150 }), fc.integer({ min: -150, max: 150 }), fc.integer({ min: -150, max: 150 })), { maxLength: 6 }),
		flips: fc.array(fc.nat(), { maxLength: 4 })
	})
	.map(({ level, pushes, flips }): Soup => {
		const m = icosphere(level, 200);
		const pts: number[][] = [];
		for (let v = 0; v < m.positions.length / 3; v++) pts.push([0, 1, 2].map((d) => Math.round(m.positions[3 * v + d])));
		for (const [v, dx, dy, dz] of pushes) {
			const p = pts[v % pts.length];
			p[0] += dx;
			p[1] += dy;
			p[2] += dz;
		}
		const tris: number[][] = [];
		for (let t = 0; t < m.indices.length / 3; t++) tris.push([m.indices[3 * t], m.indices[3 * t + 1], m.indices[3 * t + 2]]);
		for (const f of flips) tris[f % tris.length].reverse();
		return { pts, tris };
	});

/** Edits that break fans: weld one vertex onto another, double a face, collapse a face. */
const editArb = fc.array(fc.tuple(fc.constantFrom('weld', 'double', 'collapse'), fc.nat(), fc.nat()), { maxLength: 3 });

function edit(s: Soup, edits: [string, number, number][]): Soup {
	const tris = s.tris.map((t) => [...t]);
	for (const [kind, x, y] of edits) {
		if (kind === 'weld') {
			const from = x % s.pts.length, to = y % s.pts.length;
			for (const t of tris) for (let c = 0; c < 3; c++) if (t[c] === from) t[c] = to;
		} else if (kind === 'double') tris.push([...tris[x % tris.length]].reverse());
		else {
			const t = tris[x % tris.length];
			t[2] = t[y % 2];
		}
	}
	return { pts: s.pts, tris };
}

/** Two parts in one mesh, the second moved by an integer offset (so they may cross). */
function join(a: Soup, b: Soup, off: number[]): Soup {
	const n = a.pts.length;
	return {
		pts: [...a.pts, ...b.pts.map((p) => [p[0] + off[0], p[1] + off[1], p[2] + off[2]])],
		tris: [...a.tris, ...b.tris.map((t) => t.map((v) => v + n))]
	};
}

const partArb = fc.oneof(gridArb, starArb, sphereArb);
const meshArb = fc
	.record({
		a: partArb,
		b: fc.option(partArb, { nil: undefined }),
		off: fc.tuple(fc.integer({ min: -40, max: 40 }), fc.integer({ min: -40, max: 40 }), fc.integer({ min: -8, max: 8 })),
		edits: editArb
	})
	.map(({ a, b, off, edits }) => edit(b ? join(a, b, off) : a, edits as [string, number, number][]));

describe('self-intersection count on generated fans (property tests)', () => {
	it('equals the brute-force all-pairs oracle on integer meshes, with pairs at clear vertices passed over', () => {
		let skipped = 0, counted = 0;
		fc.assert(
			fc.property(meshArb, (s) => {
				const m = toMesh(s);
				const want = oracleCount(m);
				const got = findSelfIntersections(m, { sampleLimit: 0 });
				skipped += got.stats!.clearSkips;
				counted += got.pairs;
				expect(got.degenerateSkipped).toBe(want.degenerate);
				expect(got.pairs).toBe(want.pairs);
			}),
			{ numRuns: 300, seed: 17 }
		);
		// The generators must reach both sides: pairs settled by clear fans, and pairs that count.
		expect(skipped).toBeGreaterThan(1000);
		expect(counted).toBeGreaterThan(100);
	});

	it('counts the same with and without clear vertices on float coordinates', () => {
		fc.assert(
			fc.property(
				meshArb,
				fc.double({ min: 1e-6, max: 1e6, noNaN: true }),
				fc.array(fc.double({ min: -1, max: 1, noNaN: true }), { minLength: 8, maxLength: 8 }),
				(s, scale, noise) => {
					// Scaled, shifted and jittered: signs are no longer those of the integer mesh.
					const m = toMesh(s);
					const positions = m.positions.map((x, i) => (x + noise[i % 8] * 0.3) * scale + 1000 * scale);
					const prep = prepareMesh({ positions, indices: m.indices });
					const withClear = findInPrepared(prep, { sampleLimit: 1e9 });
					const without = findInPrepared({ ...prep, clear: null }, { sampleLimit: 1e9 });
					expect(withClear.pairs).toBe(without.pairs);
					expect(withClear.sample.map((x) => [x.a, x.b])).toEqual(without.sample.map((x) => [x.a, x.b]));
				}
			),
			{ numRuns: 200, seed: 18 }
		);
	});
});
