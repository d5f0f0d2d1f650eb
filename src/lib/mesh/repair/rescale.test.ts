import { describe, expect, it } from 'vitest';
import { applyRecipe, parseRecipe } from './recipe';
import { rescale } from './rescale';
import { implicitMesh, inspect } from '../testing/repair-support';
import { sphere } from '../testing/implicit-shapes';
import { expectClose } from '../testing/test-close';

describe('rescale', () => {
	// Similarity: lengths scale by k, areas by k², volumes by k³ (elementary geometry).
	it('scales a sphere by ×1000 (metres read as millimetres): edges ×1000, area ×10⁶, volume ×10⁹, same topology', () => {
		const m = implicitMesh(sphere(1), 0.2);
		const before = inspect(m);
		const r = rescale(m, 1000);
		const after = inspect(r.mesh);
		expect(r.counts).toEqual({ factor: 1000, verticesMoved: m.positions.length / 3 });
		expect(after.faces).toBe(before.faces);
		expect(after.genus).toBe(before.genus);
		expect(after.boundaryEdges).toBe(before.boundaryEdges);
		expectClose(after.minEdgeLength, before.minEdgeLength * 1000, 1e-9, 'shortest edge');
		expectClose(after.area, before.area * 1e6, 1e-9, 'area');
		expectClose(after.volume as number, (before.volume as number) * 1e9, 1e-9, 'volume');
	});

	it('runs as a recipe step with a required positive factor, and never changes its input', () => {
		const m = implicitMesh(sphere(1), 0.3);
		const copy = m.positions.slice();
		const { mesh, log } = applyRecipe(m, [{ op: 'rescale', factor: 25.4 }]);
		expect(m.positions).toEqual(copy);
		expect(mesh.positions[0]).toBeCloseTo(copy[0] * 25.4, 9);
		expect(log[0]).toMatchObject({ op: 'rescale', params: { factor: 25.4 } });
		expect(() => parseRecipe([{ op: 'rescale' }])).toThrow(/"factor" is required/);
		expect(() => parseRecipe([{ op: 'rescale', factor: -2 }])).toThrow(/positive finite number/);
	});
});
