import { describe, expect, it } from 'vitest';
import { silhouetteArea } from './projection';
import { analyseTopology, collapsedFaces } from './topology';
import { concat, icosphere, torus, unitCube } from './test-meshes';
import type { MeshBuffers } from './types';
import type { Vec3 } from './report';
import { expectClose } from './test-close';

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
});
