import { describe, expect, it } from 'vitest';
import { shapeDistance, surfaceSamples } from './shape-distance';
import { icosphere, unitCube } from './testing/test-meshes';

describe('shape distance between two surfaces', () => {
	it('two concentric spheres of radii r and R are R − r apart in both the Hausdorff and the chamfer sense (analytic)', () => {
		// Analytic: every point of the sphere of radius r is R − r from the sphere of radius R and
		// vice versa, so both one-sided maxima and means are R − r. The icospheres (level 5, 20,480
		// faces) differ from the true spheres by their chord sagitta, under 0.1 % of the radius.
		const r = 1, R = 1.5;
		const d = shapeDistance(icosphere(5, r), icosphere(5, R), { samples: 3000 });
		expect(d.hausdorff).toBeCloseTo(R - r, 2);
		expect(d.chamfer).toBeCloseTo(R - r, 2);
		expect(d.aToB.mean).toBeCloseTo(R - r, 2);
		expect(d.bToA.mean).toBeCloseTo(R - r, 2);
		expect(d.aToB.samples).toBe(3000);
	});

	it('a surface is 0 from itself, and a shifted cube no farther than the shift (analytic: every point moves by t)', () => {
		const cube = unitCube();
		expect(shapeDistance(cube, cube).hausdorff).toBeCloseTo(0, 12);
		const t = 0.25;
		const shifted = unitCube([t, 0, 0]);
		const d = shapeDistance(cube, shifted, { samples: 2000 });
		expect(d.hausdorff).toBeLessThanOrEqual(t + 1e-12);
		// The faces normal to x move by t; the side faces overlap themselves, so the mean is below t.
		expect(d.hausdorff).toBeCloseTo(t, 6);
		expect(d.chamfer).toBeGreaterThan(0);
		expect(d.chamfer).toBeLessThan(t);
	});

	it('spreads its samples by area and repeats them for the same seed', () => {
		const s1 = surfaceSamples(icosphere(2, 2), 500, 7);
		const s2 = surfaceSamples(icosphere(2, 2), 500, 7);
		expect(Array.from(s1)).toEqual(Array.from(s2));
		for (let k = 0; k < 500; k++) expect(Math.hypot(s1[3 * k], s1[3 * k + 1], s1[3 * k + 2])).toBeLessThanOrEqual(2 + 1e-9);
	});

	it('refuses a surface without area', () => {
		expect(() => shapeDistance({ positions: new Float64Array(0), indices: new Uint32Array(0) }, icosphere(1))).toThrow(/no area/);
	});
});
