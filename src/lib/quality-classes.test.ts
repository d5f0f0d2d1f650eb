import { describe, expect, it } from 'vitest';
import { qualityClasses } from './quality-classes';

const bins = Array.from({ length: 21 }, (_, i) => i / 20);

describe('face quality classes', () => {
	it('sorts the 20 report bins into good, fair, poor and sliver at 0.6, 0.3 and the sliver threshold', () => {
		// One face in each bin, plus 10 more in the lowest bin (0 … 0.05).
		const counts = bins.slice(0, 20).map((_, i) => (i === 0 ? 11 : 1));
		const c = qualityClasses({ measure: '', bins, counts }, 0.05);
		expect(c.map((x) => [x.kind, x.from, x.to, x.faces])).toEqual([
			['good', 0.6, 1, 8],
			['fair', 0.3, 0.6, 6],
			['poor', 0.05, 0.3, 5],
			['sliver', 0, 0.05, 11]
		]);
		expect(c.reduce((a, x) => a + x.share, 0)).toBeCloseTo(1, 12);
		expect(c[3].share).toBeCloseTo(11 / 30, 12);
	});
	it('follows a stricter sliver threshold', () => {
		const counts = bins.slice(0, 20).map(() => 1);
		const c = qualityClasses({ measure: '', bins, counts }, 0.1);
		expect(c.find((x) => x.kind === 'sliver')!.faces).toBe(2);
		expect(c.find((x) => x.kind === 'poor')!.faces).toBe(4);
	});
	it('gives zero shares for an empty mesh', () => {
		const c = qualityClasses({ measure: '', bins, counts: new Array(20).fill(0) }, 0.05);
		expect(c.every((x) => x.faces === 0 && x.share === 0)).toBe(true);
	});
});
