/** The one float comparison for engine tests: |actual − expected| ≤ rel · max(1, |expected|). */
import { expect } from 'vitest';

export function expectClose(actual: number, expected: number, rel = 1e-9, what = ''): void {
	const tol = rel * Math.max(1, Math.abs(expected));
	const ok = Math.abs(actual - expected) <= tol;
	expect(ok, `${what} ${actual} should be within ${tol} of ${expected}`).toBe(true);
}
