import { describe, expect, it } from 'vitest';
import { BACKGROUND_COLOUR, KIND_ORDER, KIND_STYLE, MESH_COLOUR } from './palette';
import { deltaE2000, deltaE76, DEFICIENCIES, labOf, linearToLab, MACHADO_2009, simulateLinear, type Vision } from './colour-vision';

/** Stated thresholds: CIE76 ΔE*ab and CIE L* difference, for every pair, under every vision below. */
const MIN_DELTA_E76 = 20;
const MIN_DELTA_L = 5;
const VISIONS: Vision[] = ['normal', ...DEFICIENCIES];

const colours: [string, string][] = [...KIND_ORDER.map((k) => [KIND_STYLE[k].label, KIND_STYLE[k].colour] as [string, string]), ['mesh grey', MESH_COLOUR], ['background', BACKGROUND_COLOUR]];
/** Every finding against every other finding, the mesh grey and the background (grey/background is not a finding pair). */
const pairs: [number, number][] = [];
for (let i = 0; i < KIND_ORDER.length; i++) for (let j = i + 1; j < colours.length; j++) pairs.push([i, j]);

describe('colour-vision arithmetic', () => {
	it('CIEDE2000 matches the test data of Sharma, Wu & Dalal (2005), Color Res. Appl. 30(1), table 1', () => {
		const rows: [number[], number[], number][] = [
			[[50, 2.6772, -79.7751], [50, 0, -82.7485], 2.0425],
			[[50, 0, 0], [50, -1, 2], 2.3669],
			[[50, 2.5, 0], [73, 25, -18], 27.1492],
			[[50, 2.5, 0], [50, 3.1736, 0.5854], 1.0],
			[[2.0776, 0.0795, -1.135], [0.9033, -0.0636, -0.5514], 0.9082]
		];
		for (const [a, b, d] of rows) expect(deltaE2000(a as never, b as never)).toBeCloseTo(d, 4);
	});

	it('white and mid grey stay neutral under the Machado et al. (2009, IEEE TVCG 15(6)) severity-1.0 matrices', () => {
		// Each row of the paper's matrices sums to 1, so achromatic colours are unchanged.
		for (const d of DEFICIENCIES) {
			const m = MACHADO_2009[d];
			for (let r = 0; r < 3; r++) expect(m[3 * r] + m[3 * r + 1] + m[3 * r + 2]).toBeCloseTo(1, 5);
			const lab = linearToLab(simulateLinear([0.5, 0.5, 0.5], d));
			expect(Math.hypot(lab[1], lab[2])).toBeLessThan(0.01);
		}
		expect(labOf('#ffffff')[0]).toBeCloseTo(100, 3);
	});
});

describe('viewer palette under simulated colour-vision deficiency (Machado, Oliveira & Fernandes 2009, IEEE TVCG, severity 1.0)', () => {
	for (const vision of VISIONS) {
		it(`${vision}: every pair differs by CIE76 ΔE ≥ ${MIN_DELTA_E76} and ΔL* ≥ ${MIN_DELTA_L}`, () => {
			const labs = colours.map(([, hex]) => labOf(hex, vision));
			const rows = pairs.map(([i, j]) => ({
				pair: `${colours[i][0]} / ${colours[j][0]}`,
				e76: deltaE76(labs[i], labs[j]),
				e00: deltaE2000(labs[i], labs[j]),
				dL: Math.abs(labs[i][0] - labs[j][0])
			}));
			const worstE = rows.reduce((a, b) => (b.e76 < a.e76 ? b : a));
			const worstL = rows.reduce((a, b) => (b.dL < a.dL ? b : a));
			const worst00 = rows.reduce((a, b) => (b.e00 < a.e00 ? b : a));
			console.log(`${vision}: min ΔE76 ${worstE.e76.toFixed(1)} (${worstE.pair}); min ΔL* ${worstL.dL.toFixed(1)} (${worstL.pair}); min ΔE2000 ${worst00.e00.toFixed(1)} (${worst00.pair})`);
			const tooClose = rows.filter((r) => r.e76 < MIN_DELTA_E76 || r.dL < MIN_DELTA_L).map((r) => `${r.pair}: ΔE76 ${r.e76.toFixed(1)}, ΔL* ${r.dL.toFixed(1)}`);
			expect(tooClose).toEqual([]);
		});
	}

	it('the lightness figures in the table are the computed L*', () => {
		for (const k of KIND_ORDER) expect(Math.abs(labOf(KIND_STYLE[k].colour)[0] - KIND_STYLE[k].lightness), k).toBeLessThan(1);
	});
});

describe('second cues', () => {
	const unique = (values: (string | null)[]) => {
		const set = values.filter((v): v is string => v !== null);
		return new Set(set).size === set.length;
	};
	it('no two kinds share a marker shape, a line style or a face pattern', () => {
		const styles = KIND_ORDER.map((k) => KIND_STYLE[k]);
		expect(unique(styles.map((s) => s.marker))).toBe(true);
		expect(unique(styles.map((s) => s.stroke))).toBe(true);
		expect(unique(styles.map((s) => s.pattern))).toBe(true);
		expect(styles.some((s) => s.marker === 'reticle')).toBe(false);
	});
});
