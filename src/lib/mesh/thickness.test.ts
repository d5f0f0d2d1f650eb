import { describe, expect, it } from 'vitest';
import { mulberry32, type ImplicitShape } from './testing/implicit-shapes';
import { gridFor, marchingCubes } from './testing/marching-cubes';
import { faceDistancesBruteForce } from './testing/thickness-oracle';
import { concat, flipFaces, icosphere, torus, unitCube } from './testing/test-meshes';
import { expectClose } from './testing/test-close';
import { analyseCellSize, edgesToObj, faceDistances, faceDistancesBoth, longEdges, sharpEdges } from './thickness';
import type { MeshBuffers } from './types';

/** Box [min, max], each face split into k × k quads (two triangles each), CCW from outside. */
function box(min: [number, number, number], max: [number, number, number], k = 1): MeshBuffers {
	const pos: number[] = [], idx: number[] = [];
	// Each face: an origin corner and two spanning axes ordered so u × v points outward.
	for (let axis = 0; axis < 3; axis++) {
		for (const side of [0, 1]) {
			const u = (axis + 1) % 3, v = (axis + 2) % 3;
			const [a1, a2] = side === 1 ? [u, v] : [v, u];
			const base = pos.length / 3;
			for (let i = 0; i <= k; i++) {
				for (let j = 0; j <= k; j++) {
					const q = [0, 0, 0];
					q[axis] = side ? max[axis] : min[axis];
					q[a1] = min[a1] + ((max[a1] - min[a1]) * i) / k;
					q[a2] = min[a2] + ((max[a2] - min[a2]) * j) / k;
					pos.push(q[0], q[1], q[2]);
				}
			}
			for (let i = 0; i < k; i++) {
				for (let j = 0; j < k; j++) {
					const a = base + i * (k + 1) + j, b = a + k + 1, c = b + 1, d = a + 1;
					idx.push(a, b, c, a, c, d);
				}
			}
		}
	}
	return { positions: Float64Array.from(pos), indices: Uint32Array.from(idx) };
}

const allFaces = (m: MeshBuffers) => Array.from({ length: m.indices.length / 3 }, (_, t) => t);

describe('wall thickness and gap per face', () => {
	it('reads the thickness t of a plate between two parallel faces exactly (analytic: t = 0.15)', () => {
		const t = 0.15;
		const plate = box([0, 0, 0], [4, 3, t], 6);
		const r = analyseCellSize(plate, { cellSize: 0.1 });
		expectClose(r.wall.min, t, 1e-6, 'thinnest wall');
		// Every face on the two large sides sees the other side at exactly t.
		const idx = plate.indices, p = plate.positions;
		let big = 0;
		for (let f = 0; f < idx.length / 3; f++) {
			const zs = [0, 1, 2].map((k) => p[3 * idx[3 * f + k] + 2]);
			if (zs[0] === zs[1] && zs[1] === zs[2]) {
				big++;
				expectClose(r.thickness.value[f], t, 1e-6, `face ${f}`);
			}
		}
		expect(big).toBe(2 * 2 * 36);
		expect(r.wall.flaggedFaces).toBe(big); // under 2 cells = 0.2
		expect(r.wall.regionCount).toBe(2); // the two sides meet only through the rim faces, which read wider
		// A closed convex box has no gap anywhere.
		expect(r.narrowGap.min).toBe(Infinity);
		expect(r.narrowGap.histogram.noHit).toBe(idx.length / 3);
	});

	it('reads the gap g between two blocks side by side exactly (analytic: g = 0.05), and the blocks are 1 thick', () => {
		const g = 0.05;
		const m = concat(box([0, 0, 0], [1, 1, 1], 4), box([1 + g, 0, 0], [2 + g, 1, 1], 4));
		const r = analyseCellSize(m, { cellSize: 0.1, thinCells: 1, maxDistance: Infinity });
		expectClose(r.narrowGap.min, g, 1e-6, 'narrowest gap');
		expect(r.narrowGap.flaggedFaces).toBe(2 * 32); // the two facing sides, 4 × 4 × 2 triangles each
		expect(r.narrowGap.regionCount).toBe(2);
		expectClose(r.narrowGap.regions[0].area, 1, 1e-9, 'region area');
		const fromX = r.narrowGap.minFrom[0], toX = r.narrowGap.minTo[0];
		expectClose(Math.abs(toX - fromX), g, 1e-6, 'ray length between the two points');
		expect([1, 1 + g].some((x) => Math.abs(fromX - x) < 1e-12)).toBe(true);
		expectClose(r.wall.min, 1, 1e-6, 'block thickness');
		expect(r.narrowGap.histogram.counts[0]).toBe(64); // [0, 1) cells
	});

	it('reads r2 − r1 everywhere on a spherical shell of two concentric icospheres, the inner one reversed (analytic, within the facet sag 1 %)', () => {
		const r1 = 0.8, r2 = 1;
		const outer = icosphere(4, r2);
		const inner0 = icosphere(4, r1);
		const inner = flipFaces(inner0, allFaces(inner0));
		const m = concat(outer, inner);
		const d = faceDistances(m, 'inward', { cellSize: 0.05 });
		for (let f = 0; f < d.value.length; f++) expectClose(d.value[f], r2 - r1, 0.01, `face ${f}`);
		// The cavity reads as a gap: across the inner sphere, 2 r1.
		const gap = faceDistances(m, 'outward', { cellSize: 0.05 });
		const n0 = outer.indices.length / 3;
		for (let f = 0; f < n0; f++) expect(gap.value[f]).toBe(Infinity);
		for (let f = n0; f < gap.value.length; f++) expectClose(gap.value[f], 2 * r1, 0.01, `inner face ${f}`);
	});

	it('reads 2r on a torus with tube radius r (analytic, within the facet sag 1 %)', () => {
		const r = 0.4;
		const m = torus(96, 48, 2, r);
		const d = faceDistances(m, 'inward', { cellSize: 0.1 });
		for (let f = 0; f < d.value.length; f++) expectClose(d.value[f], 2 * r, 0.01, `face ${f}`);
	});

	it('measures a marching-cubes sheet (level-set shell |‖x‖ − 1| = h/2, h = 0.12) within one grid spacing of h', () => {
		const h = 0.12, cell = 0.035;
		const shape: ImplicitShape = {
			name: 'sheet',
			field: (x, y, z) => Math.abs(Math.sqrt(x * x + y * y + z * z) - 1) - h / 2,
			min: [-1.1, -1.1, -1.1],
			max: [1.1, 1.1, 1.1],
			genus: 0
		};
		const m = marchingCubes(shape.field, gridFor(shape.min, shape.max, cell));
		const r = analyseCellSize(m, { cellSize: cell, thinCells: 6 });
		expect(Math.abs(r.wall.min - h)).toBeLessThanOrEqual(cell);
		// Nearly the whole sheet reads under 6 cells; the two largest regions are its two sides.
		const faces = m.indices.length / 3;
		expect(r.wall.flaggedFaces).toBeGreaterThan(0.99 * faces);
		expect(r.wall.regions[0].faceCount + r.wall.regions[1].faceCount).toBeGreaterThan(0.98 * faces);
	});

	for (const seed of [1, 7, 42]) {
		it(`agrees with a brute-force oracle over all faces on a random triangle soup (seed ${seed})`, () => {
			const rnd = mulberry32(seed);
			const nTri = 300;
			const pos = new Float64Array(9 * nTri), idx = new Uint32Array(3 * nTri);
			for (let t = 0; t < nTri; t++) {
				const cx = rnd() * 4, cy = rnd() * 4, cz = rnd() * 4;
				for (let k = 0; k < 3; k++) {
					pos[9 * t + 3 * k] = cx + (rnd() - 0.5) * 0.8;
					pos[9 * t + 3 * k + 1] = cy + (rnd() - 0.5) * 0.8;
					pos[9 * t + 3 * k + 2] = cz + (rnd() - 0.5) * 0.8;
					idx[3 * t + k] = 3 * t + k;
				}
			}
			// Share some vertices so the neighbourhood rule is exercised.
			for (let t = 1; t < nTri; t += 5) idx[3 * t] = idx[3 * (t - 1) + 1];
			const m = { positions: pos, indices: idx };
			const both = faceDistancesBoth(m, { cellSize: 0.3 });
			for (const dir of ['inward', 'outward'] as const) {
				const slow = faceDistancesBruteForce(m, dir, 0.3);
				for (const fast of [faceDistances(m, dir, { cellSize: 0.3 }), dir === 'inward' ? both.thickness : both.gap]) {
					let hits = 0;
					for (let t = 0; t < nTri; t++) {
						if (slow.value[t] === Infinity) expect(fast.value[t], `${dir} face ${t}`).toBe(Infinity);
						else {
							hits++;
							expectClose(fast.value[t], slow.value[t], 1e-6, `${dir} face ${t}`);
						}
					}
					expect(hits).toBeGreaterThan(10);
				}
			}
		});
	}

	it('takes the lower face number when a ray meets two faces at one distance (a shared edge), whatever their order', () => {
		// A floor triangle whose centroid (0.5, 0.5, 0) lies under the diagonal of a ceiling square at
		// z = 0.2 split along (0,0)–(1,1); the ceiling faces down, so the gap is 0.2 (analytic) on both.
		const floor = [0, 0, 0, 1.5, 0, 0, 0, 1.5, 0];
		const ceilA = [0, 0, 0.2, 1, 1, 0.2, 1, 0, 0.2];
		const ceilB = [0, 0, 0.2, 0, 1, 0.2, 1, 1, 0.2];
		for (const ceiling of [[ceilA, ceilB], [ceilB, ceilA]]) {
			const positions = new Float64Array([...floor, ...ceiling[0], ...ceiling[1]]);
			const m = { positions, indices: Uint32Array.from({ length: 9 }, (_, i) => i) };
			// One sample (cell 3) and four (cell 0.5: the centroid and the points halfway to the corners).
			for (const cellSize of [3, 0.5]) {
				const both = faceDistancesBoth(m, { cellSize });
				const one = faceDistances(m, 'outward', { cellSize });
				for (const r of [both.gap, one]) {
					expectClose(r.value[0], 0.2, 1e-6, `gap at cell ${cellSize}`);
					expect(r.hitFace[0], `cell ${cellSize}`).toBe(1);
				}
				expect(Array.from(both.gap.from.slice(0, 3))).toEqual([0.5, 0.5, 0]);
			}
		}
	});

	it('refuses a cell size that is not a positive number', () => {
		expect(() => analyseCellSize(unitCube(), { cellSize: 0 })).toThrow(/Cell size/);
		expect(() => analyseCellSize(unitCube(), { cellSize: NaN })).toThrow(/Cell size/);
	});
});

describe('longest edges and sharp edges against the cell size', () => {
	it('lists the cube diagonals √2 as the longest edges and counts all area as coarse at cell 0.5 (analytic)', () => {
		const le = longEdges(unitCube(), { cellSize: 0.5, keep: 3 });
		expect(le.longestLengths.length).toBe(3);
		for (const l of le.longestLengths) expectClose(l, Math.SQRT2, 1e-12);
		expect(le.facesOver).toBe(12);
		expectClose(le.areaShareOver, 1, 1e-12);
		const fine = longEdges(unitCube(), { cellSize: 2 });
		expect(fine.facesOver).toBe(0);
	});

	it('finds the 12 cube edges at 90° and none of the 6 face diagonals (analytic dihedral angles)', () => {
		const s = sharpEdges(unitCube());
		expect(s.angleDeg).toBe(30);
		expect(s.verts.length / 2).toBe(12);
		for (const a of s.angles) expectClose(a, 90, 1e-9);
		expect(s.boundaryOrNonManifold).toBe(0);
		const obj = edgesToObj(unitCube().positions, s.verts, 'sharp edges');
		expect(obj.split('\n').filter((l) => l.startsWith('l ')).length).toBe(12);
		expect(obj.split('\n').filter((l) => l.startsWith('v ')).length).toBe(8);
	});

	it('finds no sharp edge on a fine icosphere, whose facets meet at a few degrees', () => {
		expect(sharpEdges(icosphere(3)).verts.length).toBe(0);
	});
});

describe('wall thickness and gap on worker threads', () => {
	it('gives the same values as one thread on a torus and a shell (2 threads)', async () => {
		const { faceDistancesBothParallel } = await import('./thickness-node');
		const inner0 = icosphere(3, 0.8);
		const m = concat(torus(200, 120, 2, 0.4), icosphere(3, 1), flipFaces(inner0, allFaces(inner0)));
		const one = faceDistancesBoth(m, { cellSize: 0.1 });
		const two = await faceDistancesBothParallel(m, { cellSize: 0.1, threads: 2 });
		expect(Array.from(two.thickness.value)).toEqual(Array.from(one.thickness.value));
		expect(Array.from(two.gap.value)).toEqual(Array.from(one.gap.value));
		expect(Array.from(two.thickness.hitFace)).toEqual(Array.from(one.thickness.hitFace));
		// Summaries from the threaded measure are those of the one-call path.
		const opts = { cellSize: 0.1, maxDistance: Infinity };
		const direct = analyseCellSize(m, opts);
		const given = analyseCellSize(m, { ...opts, distances: two });
		expect(given.wall.min).toBe(direct.wall.min);
		expect(given.narrowGap.flaggedFaces).toBe(direct.narrowGap.flaggedFaces);
		expect(given.wall.regionCount).toBe(direct.wall.regionCount);
	});

	it('keeps its workers between calls, and a call that finds them busy gets workers of its own', async () => {
		const { faceDistancesBothParallel, ThicknessPool } = await import('./thickness-node');
		const pool = new ThicknessPool();
		try {
			const m = concat(torus(200, 120, 2, 0.4), icosphere(3, 1));
			const one = faceDistancesBoth(m, { cellSize: 0.1 });
			pool.warm(1);
			expect(pool.size).toBe(1);
			const first = await faceDistancesBothParallel(m, { cellSize: 0.1, threads: 2, pool });
			// Two at once: the second finds the pool held and starts a worker of its own.
			const [a, b] = await Promise.all([faceDistancesBothParallel(m, { cellSize: 0.1, threads: 2, pool }), faceDistancesBothParallel(m, { cellSize: 0.1, threads: 2, pool })]);
			expect(pool.size).toBe(1);
			for (const r of [first, a, b]) {
				expect(Array.from(r.thickness.value)).toEqual(Array.from(one.thickness.value));
				expect(Array.from(r.gap.hitFace)).toEqual(Array.from(one.gap.hitFace));
			}
		} finally {
			await pool.close();
		}
		expect(pool.size).toBe(0);
	});
});
