import { describe, expect, it } from 'vitest';
import { displayUnit, fmtArea, fmtCount, groupedDecimal, fmtIn, fmtLength, fmtNumber, fmtPercent, fmtPoint, fmtVolume, isRoundOff, plural, ROUND_OFF_REL } from './format';

describe('fmtNumber', () => {
	it('keeps 4 significant digits and drops trailing zeros', () => {
		expect(fmtNumber(12.3456)).toBe('12.35');
		expect(fmtNumber(0.0001 * 10)).toBe('0.001');
		expect(fmtNumber(2)).toBe('2');
		expect(fmtNumber(45678.9)).toBe('45,680');
		expect(fmtNumber(-0.5)).toBe('-0.5');
		expect(fmtNumber(0)).toBe('0');
	});
	it('writes very small and very large numbers in engineering notation', () => {
		expect(fmtNumber(0.000000954)).toBe('954 × 10⁻⁹');
		expect(fmtNumber(1.601e-15)).toBe('1.601 × 10⁻¹⁵');
		expect(fmtNumber(1234567)).toBe('1.235 × 10⁶');
		expect(fmtNumber(999_999_999)).toBe('1 × 10⁹');
		expect(fmtNumber(-3e-6)).toBe('-3 × 10⁻⁶');
	});
	it('writes a dash for a missing value', () => {
		expect(fmtNumber(null)).toBe('—');
		expect(fmtNumber(Number.NaN)).toBe('—');
	});
});

describe('counts', () => {
	it('groups thousands and pluralises', () => {
		expect(fmtCount(1234567)).toBe('1,234,567');
		expect(fmtCount(undefined)).toBe('—');
		expect(plural(1, 'hole')).toBe('1 hole');
		expect(plural(2400, 'open edge')).toBe('2,400 open edges');
		expect(plural(2, 'pinched vertex', 'pinched vertices')).toBe('2 pinched vertices');
	});
});

describe('lengths, areas and volumes', () => {
	it('stay in the project unit for ordinary sizes', () => {
		expect(fmtLength(12.3456, 'mm')).toBe('12.35 mm');
		expect(fmtLength(0.0015, 'm')).toBe('0.0015 m');
		expect(fmtArea(45678.9, 'mm')).toBe('45,680 mm²');
		expect(fmtVolume(0.0123, 'm')).toBe('0.0123 m³');
	});
	it('move metric values outside 0.001 … 1,000,000 to an SI-prefixed unit', () => {
		expect(fmtLength(0.0001, 'm')).toBe('0.1 mm');
		expect(fmtLength(0.000000954, 'mm')).toBe('0.954 nm');
		expect(fmtLength(2e6, 'mm')).toBe('2,000 m');
		expect(fmtVolume(1.777e6, 'mm')).toBe('0.001777 m³');
		expect(fmtArea(2.3e6, 'mm')).toBe('2.3 m²');
		expect(fmtVolume(2.5e-5, 'm')).toBe('25,000 mm³');
	});
	it('use engineering notation for inches', () => {
		expect(fmtLength(0.002, 'in')).toBe('0.002 in');
		expect(fmtLength(3e-6, 'in')).toBe('3 × 10⁻⁶ in');
	});
	it('write values within round-off of the part size as 0', () => {
		// A 200 mm pod: float32 coordinates resolve about 200 × 2⁻²³ ≈ 0.000024 mm.
		expect(fmtLength(0.000000954, 'mm', { scale: 200 })).toBe('0 mm');
		expect(fmtLength(1.601e-15, 'm', { scale: 1.2 })).toBe('0 m');
		expect(fmtVolume(-4e-9, 'mm', { scale: 200 })).toBe('0 mm³');
		// A real short edge on the same pod stays.
		expect(fmtLength(0.05, 'mm', { scale: 200 })).toBe('0.05 mm');
		expect(isRoundOff(200 * ROUND_OFF_REL * 0.99, 1, 200)).toBe(true);
		expect(isRoundOff(200 * ROUND_OFF_REL * 1.01, 1, 200)).toBe(false);
		expect(isRoundOff(1e-30, 1, null)).toBe(false);
	});
	it('write a limit and its finding, or both ends of a range, in one unit', () => {
		// 0.1 mm limit, 0.0421 mm finding in a metre project: millimetres for both.
		const du = displayUnit([0.0001, 0.0000421], 'm');
		expect(du.label).toBe('mm');
		expect(fmtLength(0.0001, 'm', { unit: du })).toBe('0.1 mm');
		expect(fmtLength(0.0000421, 'm', { unit: du })).toBe('0.0421 mm');
		expect(fmtIn(0.0000421, du)).toBe('0.0421');
		// Shortest and longest edge of the keel bulb: 0.7071 – 86 mm rather than 707.1 µm – 0.086 m.
		const edges = displayUnit([0.0007071, 0.086], 'm');
		expect(`${fmtIn(0.0007071, edges)} – ${fmtLength(0.086, 'm', { unit: edges })}`).toBe('0.7071 – 86 mm');
		// Values already plain in the project unit stay in it.
		expect(displayUnit([0.04, 8.5], 'mm').label).toBe('mm');
		expect(displayUnit([12, 3e6], 'mm', 2).label).toBe('mm²');
		// A finding a million times the limit reads in its own unit.
		expect(fmtLength(2e4, 'm', { unit: du })).toBe('20,000 m');
		// Round-off does not pull the unit: it is written 0.
		expect(displayUnit([1e-15, 0.5], 'm', 1, { scale: 1 }).label).toBe('m');
	});
});

describe('points', () => {
	it('write all coordinates in one unit, with round-off as 0', () => {
		expect(fmtPoint([-0.00000000298, 0, 0], 'mm', { scale: 150 })).toBe('(0, 0, 0) mm');
		expect(fmtPoint([12.5, -3.25, 0.000001], 'mm', { scale: 150 })).toBe('(12.5, -3.25, 0) mm');
		expect(fmtPoint([0.41, 0.0002, 1.2], 'm')).toBe('(0.41, 0.0002, 1.2) m');
	});
});

describe('percent', () => {
	it('writes shares and signed changes', () => {
		expect(fmtPercent(0.00213, { signed: true })).toBe('+0.213 %');
		expect(fmtPercent(-0.125)).toBe('-12.5 %');
		expect(fmtPercent(0)).toBe('0 %');
	});
});

describe('groupedDecimal', () => {
	it("writes what toLocaleString('en-US', { maximumFractionDigits: 20 }) writes", () => {
		const values = [0, -0, 1, -1, 999, 1000, -1000, 12480, 1234567, 1234567.125, 0.1 + 0.2, 1e-6, 2.5e-6, 0.001234, 999999.9, 1e20, 123456789012345680000, 5e-7, 1e21, 1e300];
		let seed = 7;
		const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31);
		for (let i = 0; i < 2000; i++) {
			const mag = 10 ** Math.floor(rnd() * 16 - 7);
			const x = (rnd() - 0.5) * mag;
			values.push(x, Number(x.toPrecision(4)), Math.round(x));
		}
		for (const x of values) expect(groupedDecimal(x), String(x)).toBe(x.toLocaleString('en-US', { maximumFractionDigits: 20 }));
	});

	it('counts read as before', () => {
		for (const n of [0, 7, 1000, 35144, 1001812, 2 ** 31]) expect(fmtCount(n)).toBe(n.toLocaleString('en-US'));
	});
});
