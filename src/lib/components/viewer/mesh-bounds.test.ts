import { describe, expect, it } from 'vitest';
import { BufferAttribute, BufferGeometry } from 'three';
import { positionBounds } from './layers/mesh-layer';
import { icosphere } from '../../mesh/testing/test-meshes';

// Reference: three.js's own BufferGeometry.computeBoundingBox / computeBoundingSphere (the sphere
// about the box's centre through the farthest vertex); positionBounds must give the same.
describe('positionBounds', () => {
	const cases: [string, Float32Array][] = [
		['an icosphere moved off the origin', Float32Array.from(icosphere(3).positions, (x, i) => x * 2.5 + (i % 3) * 7 - 3)],
		['one triangle', new Float32Array([0, 0, 0, 1, 0, 0, 0, 2, -1])]
	];
	for (const [name, p] of cases) {
		it(`matches three.js on ${name}`, () => {
			const g = new BufferGeometry();
			g.setAttribute('position', new BufferAttribute(p, 3));
			g.computeBoundingBox();
			g.computeBoundingSphere();
			const { box, sphere } = positionBounds(p);
			expect(box.min.toArray()).toEqual(g.boundingBox!.min.toArray());
			expect(box.max.toArray()).toEqual(g.boundingBox!.max.toArray());
			expect(sphere.center.distanceTo(g.boundingSphere!.center)).toBeLessThan(1e-12);
			expect(sphere.radius).toBeCloseTo(g.boundingSphere!.radius, 6);
		});
	}
	it('gives an empty box and sphere for no vertices', () => {
		const { box, sphere } = positionBounds(new Float32Array(0));
		expect(box.isEmpty()).toBe(true);
		expect(sphere.isEmpty()).toBe(true);
	});
});
