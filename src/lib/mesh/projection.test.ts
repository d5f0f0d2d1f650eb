import { describe, expect, it } from 'vitest';
import { segmentCells, silhouetteArea } from './projection';
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
