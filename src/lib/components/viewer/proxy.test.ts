import { describe, expect, it } from 'vitest';
import { clusterProxy } from './proxy';
import { icosphere } from '../../mesh/testing/test-meshes';

const sphere = icosphere(6); // 81,920 triangles, radius 1
const pos32 = Float32Array.from(sphere.positions);

describe('clusterProxy', () => {
	it('returns nothing when the mesh is already under the target', () => {
		expect(clusterProxy(pos32, sphere.indices, 100_000)).toBeNull();
	});

	it('cuts a fine icosphere to about the target and keeps it on the unit sphere (within a cell)', () => {
		const p = clusterProxy(pos32, sphere.indices, 8000)!;
		const tris = p.indices.length / 3;
		// Clustering is approximate: within a factor of three of the target (common practice for a grid estimate).
		expect(tris).toBeGreaterThan(8000 / 3);
		expect(tris).toBeLessThan(8000 * 3);
		for (let v = 0; v < p.positions.length / 3; v++) {
			const r = Math.hypot(p.positions[3 * v], p.positions[3 * v + 1], p.positions[3 * v + 2]);
			expect(Math.abs(r - 1)).toBeLessThan(0.1);
		}
		for (const i of p.indices) expect(i).toBeLessThan(p.positions.length / 3);
	});
});
