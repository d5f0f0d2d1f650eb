import { describe, expect, it, vi } from 'vitest';
import { analyseTopology, collapsedFaces } from './topology';
import { flipFaces, torus, unitCube, withoutFaces } from './testing/test-meshes';
import type { MeshBuffers } from './types';
import type { Vec3 } from './report-types';

// The clipper stands in for a failing one while a test sets failUnion.
const state = vi.hoisted(() => ({ failUnion: false }));
vi.mock('clipper-lib', async (importOriginal) => {
	const real = ((await importOriginal()) as { default: typeof import('clipper-lib').default }).default;
	class Clipper extends real.Clipper {
		Execute(clipType: number, solution: { X: number; Y: number }[][], subj: number, clip: number): boolean {
			if (state.failUnion) throw new Error('clipper failed');
			return super.Execute(clipType, solution, subj, clip);
		}
	}
	return { default: { ...real, Clipper } };
});

const { frontalArea } = await import('./projection');

function both(m: MeshBuffers, d: Vec3, oneSided?: Uint8Array, rasterCells = 512) {
	const { mask } = collapsedFaces(m.indices);
	const topo = analyseTopology(m.indices, m.positions.length / 3, mask);
	const l = Math.hypot(...d);
	const dir: Vec3 = [d[0] / l, d[1] / l, d[2] / l];
	return {
		exact: frontalArea(m.positions, m.indices, mask, topo.edges, dir, 128, undefined, oneSided, Infinity, 0),
		raster: frontalArea(m.positions, m.indices, mask, topo.edges, dir, rasterCells, undefined, oneSided, 0, 0)
	};
}

describe('exact frontal area, robustness', () => {
	it('falls back to the raster when the union throws, and never fails the answer', () => {
		state.failUnion = true;
		try {
			// The fallback is the raster of the same cell count, result for result.
			const { exact, raster } = both(unitCube(), [1, 1, 1], undefined, 128);
			expect(exact).toEqual(raster);
		} finally {
			state.failUnion = false;
		}
		expect(both(unitCube(), [1, 1, 1]).exact.method).toBe('union');
	});

	it('unites triangles of mixed facing on an open surface (all faces count there), as the raster does', () => {
		// An open cube with some faces flipped: no shell is closed, so no face is one-sided and both
		// facings are united; many triangles share edges and corners.
		const m = flipFaces(withoutFaces(unitCube(), [0, 1]), [2, 5, 7]);
		for (const d of [[1, 0, 0], [0.3, -0.5, 0.8], [1, 1, 1]] as Vec3[]) {
			const { exact, raster } = both(m, d);
			expect(exact.method).toBe('union');
			expect(Math.abs(exact.area - raster.area)).toBeLessThanOrEqual(raster.errorBound + exact.errorBound);
		}
	});

	it('unites a torus seen edge-on, where front and back triangles overlap and touch along shared edges', () => {
		const m = torus(16, 8);
		for (const d of [[1, 0, 0], [0, 1, 1e-9]] as Vec3[]) {
			const { exact, raster } = both(m, d);
			expect(exact.method).toBe('union');
			expect(Math.abs(exact.area - raster.area)).toBeLessThanOrEqual(raster.errorBound + exact.errorBound);
		}
	});
});
