import { describe, expect, it } from 'vitest';
import { ccw2, dropAxis, isDegenerateTriangle, side3 } from './predicates';

const P = (...xs: number[]) => Float64Array.from(xs);

describe('exact orientation signs', () => {
	it('gives +1 for a counter-clockwise 2D triangle and −1 for clockwise, 0 for collinear', () => {
		expect(ccw2(0, 0, 1, 0, 0, 1)).toBe(1);
		expect(ccw2(0, 0, 0, 1, 1, 0)).toBe(-1);
		expect(ccw2(0, 0, 1, 1, 3, 3)).toBe(0);
	});

	it('gives +1 for a point on the side the CCW normal points to', () => {
		expect(side3(0, 0, 0, 1, 0, 0, 0, 1, 0, 0.2, 0.2, 1)).toBe(1);
		expect(side3(0, 0, 0, 1, 0, 0, 0, 1, 0, 0.2, 0.2, -1)).toBe(-1);
		expect(side3(0, 0, 0, 1, 0, 0, 0, 1, 0, 5, -7, 0)).toBe(0);
	});

	it('decides near-collinear points exactly where float arithmetic cannot (Shewchuk-style test)', () => {
		// (0.5 + k·2⁻⁵³, 0.5) against the line y = x through (12, 12) and (24, 24): the float
		// determinant is swamped by rounding; the exact sign follows the tiny offset: a point just
		// right of y = x makes (a, b, c) clockwise, (b − a) × (c − a) = −12·e.
		const e = 2 ** -53;
		expect(ccw2(0.5, 0.5, 12, 12, 24, 24)).toBe(0);
		expect(ccw2(0.5 + e, 0.5, 12, 12, 24, 24)).toBe(-1);
		expect(ccw2(0.5 - e, 0.5, 12, 12, 24, 24)).toBe(1);
	});
});

describe('isDegenerateTriangle', () => {
	it('finds repeated indices, coincident corners and collinear corners', () => {
		const p = P(0, 0, 0, 1, 2, 3, 2, 4, 6, 1, 2, 3, 0, 1, 0);
		expect(isDegenerateTriangle(p, 0, 0, 1)).toBe(true); // repeated index
		expect(isDegenerateTriangle(p, 0, 1, 3)).toBe(true); // same position, different index
		expect(isDegenerateTriangle(p, 0, 1, 2)).toBe(true); // collinear in 3D
		expect(isDegenerateTriangle(p, 0, 1, 4)).toBe(false);
	});

	it('keeps a sliver whose area is tiny but not zero', () => {
		const p = P(0, 0, 0, 1, 0, 0, 0.5, 1e-300, 0);
		expect(isDegenerateTriangle(p, 0, 1, 2)).toBe(false);
	});
});

describe('dropAxis', () => {
	it('drops the axis along the normal so the projection keeps the area', () => {
		expect(dropAxis(0, 0, 0, 0, 1, 0, 0, 0, 1)).toBe(0); // triangle in the y–z plane
		expect(dropAxis(0, 0, 0, 0, 0, 1, 1, 0, 0)).toBe(1);
		expect(dropAxis(0, 0, 0, 1, 0, 0, 0, 1, 0)).toBe(2);
	});
});
