import { describe, expect, it } from 'vitest';
import { basisFor, EXACT_UNION_MAX_FACES, frontalArea, segmentCells, silhouetteArea, SLAB_MAX_FACES } from './projection';
import { unionSilhouetteArea } from './projection-union';
import { slabSilhouetteArea } from './projection-slabs';
import { mulberry32 } from './random';
import { gridFor, marchingCubes } from './testing/marching-cubes';
import { sphere as sphereShape } from './testing/implicit-shapes';
import { analyseTopology, collapsedFaces } from './topology';
import { concat, icosphere, torus, unitCube } from './testing/test-meshes';
import type { MeshBuffers } from './types';
import type { Vec3 } from './report-types';
import { expectClose } from './testing/test-close';

function shadow(m: MeshBuffers, d: Vec3, cells: number, oneSided = false) {
	const { mask } = collapsedFaces(m.indices);
	const topo = analyseTopology(m.indices, m.positions.length / 3, mask);
	const l = Math.hypot(...d);
	const dir: Vec3 = [d[0] / l, d[1] / l, d[2] / l];
	return silhouetteArea(m.positions, m.indices, mask, topo.edges, dir, cells, undefined, oneSided ? new Uint8Array(m.indices.length / 3).fill(1) : undefined);
}

/** frontalArea with every face of one facing where the shell is closed; exactMaxFaces and slabMaxFaces pick the method (by default the exact union). */
function frontal(m: MeshBuffers, d: Vec3, exactMaxFaces = Infinity, cells = 128, skip?: Uint8Array, slabMaxFaces = 0) {
	const { mask } = collapsedFaces(m.indices);
	if (skip) for (let t = 0; t < skip.length; t++) mask[t] |= skip[t];
	const topo = analyseTopology(m.indices, m.positions.length / 3, mask);
	const l = Math.hypot(...d);
	const dir: Vec3 = [d[0] / l, d[1] / l, d[2] / l];
	return frontalArea(m.positions, m.indices, mask, topo.edges, dir, cells, undefined, new Uint8Array(m.indices.length / 3).fill(1), exactMaxFaces, slabMaxFaces);
}

/** Area of the convex hull of the mesh's corners projected along d (Andrew's monotone chain, shoelace formula). */
function projectedHullArea(m: MeshBuffers, d: Vec3): number {
	const l = Math.hypot(...d);
	const [u, w] = basisFor([d[0] / l, d[1] / l, d[2] / l]);
	const p = m.positions;
	const pts: [number, number][] = [];
	for (let v = 0; v < p.length / 3; v++) pts.push([p[3 * v] * u[0] + p[3 * v + 1] * u[1] + p[3 * v + 2] * u[2], p[3 * v] * w[0] + p[3 * v + 1] * w[1] + p[3 * v + 2] * w[2]]);
	pts.sort((a, b) => a[0] - b[0] || a[1] - b[1]);
	const cross = (o: number[], a: number[], b: number[]) => (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0]);
	const half = (list: [number, number][]) => {
		const h: [number, number][] = [];
		for (const q of list) {
			while (h.length >= 2 && cross(h[h.length - 2], h[h.length - 1], q) <= 0) h.pop();
			h.push(q);
		}
		return h.slice(0, -1);
	};
	const hull = [...half(pts), ...half([...pts].reverse())];
	let a = 0;
	for (let i = 0; i < hull.length; i++) {
		const q = hull[i], r = hull[(i + 1) % hull.length];
		a += q[0] * r[1] - r[0] * q[1];
	}
	return a / 2;
}

describe('frontal area as the exact union of the projected triangles (small meshes)', () => {
	it('gives the unit cube exactly 1 along each axis and √3 along its diagonal', () => {
		for (const d of [[1, 0, 0], [0, 1, 0], [0, 0, 1]] as Vec3[]) {
			const r = frontal(unitCube(), d);
			expect(r.method).toBe('union');
			expect(r.area).toBe(1);
		}
		// Published: the shadow of the unit cube along (1, 1, 1)/√3 is a regular hexagon of side √(2/3),
		// area (3√3 / 2)(2/3) = √3 (also Cauchy's projection formula ½ Σ |n·d| A).
		const diag = frontal(unitCube(), [1, 1, 1]);
		expect(Math.abs(diag.area - Math.sqrt(3))).toBeLessThanOrEqual(diag.errorBound);
		expect(diag.errorBound).toBeLessThan(1e-5);
	});

	it('matches the area of the projected polygon of an icosphere (its convex hull: common practice for a convex body)', () => {
		const m = icosphere(2);
		for (const d of [[1, 0, 0], [0.3, -0.5, 0.8], [1, 1, 0]] as Vec3[]) {
			const r = frontal(m, d), hull = projectedHullArea(m, d);
			expect(r.method).toBe('union');
			// The hull's own float sum rounds too (a few ulps of the area).
			expect(Math.abs(r.area - hull)).toBeLessThanOrEqual(r.errorBound + 1e-12);
			expect(r.errorBound / r.area).toBeLessThan(1e-5);
		}
	});

	it('sees a torus along its axis as a polygonal annulus, near π(R+r)² − π(R−r)² when fine enough', () => {
		// Seen along z, the parametric torus (n around the axis) shows the regular n-gon through its
		// outer equator minus the one through its inner equator: (n/2) sin(2π/n) ((R+r)² − (R−r)²)
		// (area of a regular polygon from its circumradius, a published formula); the smooth torus
		// shows the annulus π(R+r)² − π(R−r)² = 4πRr.
		const n = 32, R = 2, r = 0.5;
		const m = torus(n, 8, R, r);
		const res = frontal(m, [0, 0, 1]);
		const polygonal = (n / 2) * Math.sin((2 * Math.PI) / n) * ((R + r) ** 2 - (R - r) ** 2);
		expect(res.method).toBe('union');
		expect(Math.abs(res.area - polygonal)).toBeLessThanOrEqual(res.errorBound + 1e-12);
		expectClose(res.area, 4 * Math.PI * R * r, 0.01, 'annulus');
	});

	it('agrees with the raster within the raster’s bound on meshes around the threshold', () => {
		const cases: MeshBuffers[] = [icosphere(2), torus(16, 16), torus(24, 12), concat(unitCube(), unitCube([0.5, 0.25, 0.1]))];
		for (const m of cases) {
			for (const d of [[1, 0, 0], [0.3, -0.5, 0.8], [0, 0, 1]] as Vec3[]) {
				const exact = frontal(m, d), raster = frontal(m, d, 0, 512, undefined, 0);
				expect(exact.method).toBe('union');
				expect(raster.method).toBe('raster');
				expect(Math.abs(exact.area - raster.area)).toBeLessThanOrEqual(raster.errorBound + exact.errorBound);
			}
		}
	});

	it('skips zero-area and skipped faces as the raster does', () => {
		// A cube with a zero-area face (three corners on one line) and a second cube skipped.
		const cube = unitCube();
		const sliver: MeshBuffers = { positions: new Float64Array([0, 0, 2, 1, 0, 2, 2, 0, 2]), indices: new Uint32Array([0, 1, 2]) };
		const m = concat(cube, sliver, unitCube([3, 0, 0]));
		const skip = new Uint8Array(m.indices.length / 3);
		skip.fill(1, 13);
		for (const d of [[0, 0, 1], [0, 1, 0]] as Vec3[]) {
			const exact = frontal(m, d, Infinity, 128, skip), raster = frontal(m, d, 0, 512, skip, 0);
			expect(exact.area).toBe(1);
			expect(Math.abs(exact.area - raster.area)).toBeLessThanOrEqual(raster.errorBound);
		}
	});

	it('uses the slabs up to SLAB_MAX_FACES faces, the union where they give way, and gives the raster’s result unchanged above', () => {
		expect(frontal(unitCube(), [1, 0, 0], EXACT_UNION_MAX_FACES, 128, undefined, SLAB_MAX_FACES).method).toBe('slabs');
		expect(frontal(unitCube(), [1, 0, 0], EXACT_UNION_MAX_FACES).method).toBe('union');
		const big = icosphere(4);
		expect(big.indices.length / 3).toBeGreaterThan(EXACT_UNION_MAX_FACES);
		const d: Vec3 = [0.3, -0.5, 0.8];
		expect(frontal(big, d, EXACT_UNION_MAX_FACES, 128, undefined, SLAB_MAX_FACES).method).toBe('slabs');
		const r = frontal(big, d, EXACT_UNION_MAX_FACES, 128, undefined, 1000);
		const l = Math.hypot(...d);
		const { method, ...rest } = r;
		expect(method).toBe('raster');
		const { mask } = collapsedFaces(big.indices);
		const topo = analyseTopology(big.indices, big.positions.length / 3, mask);
		const one = new Uint8Array(big.indices.length / 3).fill(1);
		expect(rest).toEqual(silhouetteArea(big.positions, big.indices, mask, topo.edges, [d[0] / l, d[1] / l, d[2] / l], 128, undefined, one));
	});
});

/** Both exact methods on the same projected triangles (no facing rule, so open soups work too). */
function bothExact(m: MeshBuffers, d: Vec3, oneSided = false) {
	const { mask } = collapsedFaces(m.indices);
	const topo = analyseTopology(m.indices, m.positions.length / 3, mask);
	const l = Math.hypot(...d);
	const [u, w] = basisFor([d[0] / l, d[1] / l, d[2] / l]);
	const nv = m.positions.length / 3, tc = m.indices.length / 3;
	const proj = new Float64Array(2 * nv);
	for (let v = 0; v < nv; v++) {
		const x = m.positions[3 * v], y = m.positions[3 * v + 1], z = m.positions[3 * v + 2];
		proj[2 * v] = x * u[0] + y * u[1] + z * u[2];
		proj[2 * v + 1] = x * w[0] + y * w[1] + z * w[2];
	}
	const one = oneSided ? new Uint8Array(tc).fill(1) : undefined;
	const slabs = slabSilhouetteArea(proj, m.indices, tc, mask, one, topo.edges);
	const union = unionSilhouetteArea(proj, m.indices, tc, mask, one);
	return { slabs, union };
}

/** n triangles with corners uniform in the unit square at height 0 (a soup of separate triangles). */
function triangleSoup(n: number, seed: number): MeshBuffers {
	const rnd = mulberry32(seed);
	const positions = new Float64Array(9 * n), indices = new Uint32Array(3 * n);
	for (let i = 0; i < 3 * n; i++) {
		positions[3 * i] = rnd();
		positions[3 * i + 1] = rnd();
		positions[3 * i + 2] = 0;
		indices[i] = i;
	}
	return { positions, indices };
}

describe('frontal area by slabs', () => {
	it('gives the unit cube exactly 1 along each axis and √3 along its diagonal', () => {
		for (const d of [[1, 0, 0], [0, 1, 0], [0, 0, 1]] as Vec3[]) {
			const r = frontal(unitCube(), d, 0, 128, undefined, Infinity);
			expect(r.method).toBe('slabs');
			expect(Math.abs(r.area - 1)).toBeLessThanOrEqual(r.errorBound);
		}
		// Published: the hexagonal shadow of the unit cube along its diagonal has area √3.
		const diag = frontal(unitCube(), [1, 1, 1], 0, 128, undefined, Infinity);
		expect(diag.method).toBe('slabs');
		expect(Math.abs(diag.area - Math.sqrt(3))).toBeLessThanOrEqual(diag.errorBound + 4e-16);
		expect(diag.errorBound).toBeLessThan(1e-12);
	});

	it('matches the area of the projected polygon of an icosphere (its convex hull: common practice for a convex body)', () => {
		for (const m of [icosphere(2), icosphere(4)]) {
			for (const d of [[1, 0, 0], [0.3, -0.5, 0.8], [1, 1, 0]] as Vec3[]) {
				const r = frontal(m, d, 0, 128, undefined, Infinity), hull = projectedHullArea(m, d);
				expect(r.method).toBe('slabs');
				expect(Math.abs(r.area - hull)).toBeLessThanOrEqual(r.errorBound + 1e-12);
				expect(r.errorBound / r.area).toBeLessThan(1e-9);
			}
		}
	});

	it('sees a torus along its axis as a polygonal annulus (area of a regular polygon from its circumradius)', () => {
		const n = 48, R = 2, r = 0.5;
		const res = frontal(torus(n, 16, R, r), [0, 0, 1], 0, 128, undefined, Infinity);
		const polygonal = (n / 2) * Math.sin((2 * Math.PI) / n) * ((R + r) ** 2 - (R - r) ** 2);
		expect(res.method).toBe('slabs');
		expect(Math.abs(res.area - polygonal)).toBeLessThanOrEqual(res.errorBound + 1e-12);
	});

	it('gives the union of two crossed triangles (a hexagram: 4/3 of one triangle, a published construction)', () => {
		// Two equilateral triangles of side 1, the second turned by 180° about the common centre: the
		// overlap is a regular hexagon of 2/3 of one triangle, so the union is 4/3 of one.
		const h = Math.sqrt(3) / 2, c = h / 3;
		const m: MeshBuffers = {
			positions: new Float64Array([-0.5, -c, 0, 0.5, -c, 0, 0, h - c, 0, -0.5, c, 0, 0, c - h, 0, 0.5, c, 0]),
			indices: new Uint32Array([0, 1, 2, 3, 4, 5])
		};
		const { slabs } = bothExact(m, [0, 0, 1]);
		expect(slabs).not.toBeNull();
		expect(Math.abs(slabs!.area - (4 / 3) * (h / 2))).toBeLessThanOrEqual(slabs!.errorBound + 1e-15);
		expect(slabs!.errorBound).toBeLessThan(1e-12);
	});

	it('agrees with the exact union (clipper-lib) within both bounds on crossing soups, tori, overlapping cubes and a marching-cubes sphere', () => {
		const s = sphereShape(1);
		const cases: [MeshBuffers, boolean][] = [
			[triangleSoup(40, 1), false],
			[triangleSoup(60, 2), false],
			[torus(16, 16), true],
			[torus(16, 16), false],
			[concat(unitCube(), unitCube([0.5, 0.25, 0.1])), true],
			[marchingCubes(s.field, gridFor(s.min, s.max, 0.25)), true]
		];
		for (const [m, one] of cases) {
			for (const d of [[0, 0, 1], [0.3, -0.5, 0.8], [1, 0, 0]] as Vec3[]) {
				const { slabs, union } = bothExact(m, d, one);
				expect(slabs).not.toBeNull();
				expect(Math.abs(slabs!.area - union.area)).toBeLessThanOrEqual(slabs!.errorBound + union.errorBound);
				// (A flat soup seen edge-on has no shadow: both 0.)
				expect(slabs!.errorBound).toBeLessThanOrEqual(1e-6 * union.area);
			}
		}
	});

	it('gives way to the raster when a soup’s crossings would cost more than its work cap', () => {
		// 150 random triangles cross each other thousands of times, each crossing a line through all of them.
		const m = triangleSoup(150, 2);
		expect(bothExact(m, [0, 0, 1]).slabs).toBeNull();
		const { mask } = collapsedFaces(m.indices);
		const topo = analyseTopology(m.indices, m.positions.length / 3, mask);
		const r = frontalArea(m.positions, m.indices, mask, topo.edges, [0, 0, 1], 128, undefined, undefined, 0);
		expect(r.method).toBe('raster');
		// Up to EXACT_UNION_MAX_FACES the exact union answers instead.
		expect(frontalArea(m.positions, m.indices, mask, topo.edges, [0, 0, 1], 128).method).toBe('union');
		const { union } = bothExact(m, [0, 0, 1]);
		expect(Math.abs(r.area - union.area)).toBeLessThanOrEqual(r.errorBound + union.errorBound);
	});

	it('agrees with a 4096-cell raster within its bound on larger closed meshes, with a far smaller bound', () => {
		const s = sphereShape(1);
		for (const m of [torus(120, 48), marchingCubes(s.field, gridFor(s.min, s.max, 0.05))]) {
			for (const d of [[1, 0, 0], [0.3, -0.5, 0.8]] as Vec3[]) {
				const r = frontal(m, d, 0, 128, undefined, Infinity), ref = shadow(m, d, 4096, true);
				expect(r.method).toBe('slabs');
				expect(Math.abs(r.area - ref.area)).toBeLessThanOrEqual(r.errorBound + ref.errorBound);
				expect(r.errorBound).toBeLessThan(ref.errorBound / 100);
			}
		}
	});

	it('skips zero-area and skipped faces as the raster does', () => {
		const sliver: MeshBuffers = { positions: new Float64Array([0, 0, 2, 1, 0, 2, 2, 0, 2]), indices: new Uint32Array([0, 1, 2]) };
		const m = concat(unitCube(), sliver, unitCube([3, 0, 0]));
		const skip = new Uint8Array(m.indices.length / 3);
		skip.fill(1, 13);
		for (const d of [[0, 0, 1], [0, 1, 0]] as Vec3[]) {
			const r = frontal(m, d, 0, 128, skip, Infinity);
			expect(r.method).toBe('slabs');
			expect(Math.abs(r.area - 1)).toBeLessThanOrEqual(r.errorBound);
		}
	});
});

describe('silhouette area', () => {
	it('gives the unit cube a shadow of exactly 1 along each axis', () => {
		for (const d of [[1, 0, 0], [0, 1, 0], [0, 0, 1]] as Vec3[]) expect(shadow(unitCube(), d, 512).area).toBe(1);
	});

	it('matches Cauchy’s formula ½ Σ|n·d|·A for convex shapes: the cube along its diagonal shows √3', () => {
		// For a convex body the shadow is half the projected surface (Cauchy's projection formula);
		// for the unit cube along (1, 1, 1)/√3 that is (|dx| + |dy| + |dz|) = √3.
		const s = shadow(unitCube(), [1, 1, 1], 1024);
		expect(Math.abs(s.area - Math.sqrt(3))).toBeLessThanOrEqual(s.errorBound);
		expect(s.errorBound).toBeLessThan(0.01);
	});

	it('stays within the stated bound of a 4096-cell raster of the same icosphere (brute force)', () => {
		const m = icosphere(3, 2);
		for (const d of [[1, 0, 0], [0.3, -0.5, 0.8], [1, 1, 0]] as Vec3[]) {
			const coarse = shadow(m, d, 128), fine = shadow(m, d, 4096);
			expect(Math.abs(coarse.area - fine.area)).toBeLessThanOrEqual(coarse.errorBound + fine.errorBound);
		}
	});

	it('gives the same shadow from one facing as from all faces of a closed consistent torus', () => {
		const m = torus(96, 32);
		for (const d of [[1, 0, 0], [0, 0.6, 0.8]] as Vec3[]) {
			const all = shadow(m, d, 1024), one = shadow(m, d, 1024, true);
			expect(Math.abs(all.area - one.area)).toBeLessThanOrEqual(all.errorBound);
			expectClose(one.area, all.area, 0.01, 'one facing vs all faces');
		}
	});

	it('counts the overlap of two cubes once', () => {
		// Cubes at x 0..1 and x 0.5..1.5 overlap in x; seen along z they shadow 1.5 × 1.
		const a = unitCube(), b = unitCube([0.5, 0, 0]);
		const s = shadow(concat(a, b), [0, 0, 1], 512);
		// 1 is not a whole number of 1.5/512 cells, so the last row is a partial one.
		expect(Math.abs(s.area - 1.5)).toBeLessThanOrEqual(s.errorBound);
		expect(s.errorBound).toBeLessThan(0.1);
	});

	it('keeps the bound within 1 % of the area on ordinary closed meshes, and the true value inside it', () => {
		// Cauchy's projection formula for the cube along its diagonal gives √3 exactly; the others are
		// checked against a 4096-cell raster of the same mesh (each within its own bound).
		const diag = shadow(unitCube(), [1, 1, 1], 512);
		expect(Math.abs(diag.area - Math.sqrt(3))).toBeLessThanOrEqual(diag.errorBound);
		expect(diag.errorBound / diag.area).toBeLessThan(0.002);
		const s = sphereShape(1);
		const cases: MeshBuffers[] = [icosphere(4), torus(120, 48), marchingCubes(s.field, gridFor(s.min, s.max, 0.05))];
		for (const m of cases) {
			for (const d of [[1, 0, 0], [0.3, -0.5, 0.8]] as Vec3[]) {
				const r = shadow(m, d, 512, true), ref = shadow(m, d, 4096, true);
				expect(r.errorBound / r.area).toBeLessThan(0.01);
				expect(Math.abs(r.area - ref.area)).toBeLessThanOrEqual(r.errorBound + ref.errorBound);
			}
		}
	});

	it('marks every cell a segment meets, each once, including steep, flat and corner-crossing ones', () => {
		const seen = (ax: number, ay: number, bx: number, by: number) => {
			const out: string[] = [];
			segmentCells(ax, ay, bx, by, 10, 10, (c, r) => out.push(`${c},${r}`));
			return out;
		};
		expect(new Set(seen(0.5, 0.5, 0.6, 0.7))).toEqual(new Set(['0,0']));
		expect(seen(0.5, 2.5, 4.5, 2.5).length).toBe(5);
		// Through the corner (2, 2): the margin adds the cells touching that corner.
		expect(new Set(seen(1.5, 1.5, 2.5, 2.5))).toEqual(new Set(['1,1', '2,1', '1,2', '2,2']));
		const all = seen(0.1, 0.2, 9.7, 8.9);
		expect(new Set(all).size).toBe(all.length);
		// Brute force: a cell is met iff the segment passes within the margin of it (dense sampling).
		for (let t = 0; t <= 1; t += 1e-4) {
			const x = 0.1 + t * 9.6, y = 0.2 + t * 8.7;
			expect(all).toContain(`${Math.floor(x)},${Math.floor(y)}`);
		}
	});
});
