import { describe, expect, it } from 'vitest';
import { areaAndVolume, judgeRepair, sameMesh } from './change-measures';
import { skippedItems } from './skipped';
import { orientConsistently } from './orient';
import type { MeshBuffers } from '../types';

const LIMITS = { maxVolumeChangePercent: 1, maxAreaChangePercent: 2, maxFaceChangePercent: 50, maxDeviation: { mode: 'fraction-of-cell' as const, value: 0.5 } };

function cube(s = 1): MeshBuffers {
	const p = [0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0, 0, 0, 1, 1, 0, 1, 1, 1, 1, 0, 1, 1].map((x) => x * s);
	const f = [0, 2, 1, 0, 3, 2, 4, 5, 6, 4, 6, 7, 0, 1, 5, 0, 5, 4, 1, 2, 6, 1, 6, 5, 2, 3, 7, 2, 7, 6, 3, 0, 4, 3, 4, 7];
	return { positions: new Float64Array(p), indices: new Uint32Array(f) };
}

/** A Möbius strip: a band of quads whose ends are joined with a half twist. */
function mobius(n = 24): MeshBuffers {
	const pos: number[] = [];
	for (let i = 0; i < n; i++) {
		const t = (2 * Math.PI * i) / n;
		for (const s of [-0.3, 0.3]) {
			const r = 1 + s * Math.cos(t / 2);
			pos.push(r * Math.cos(t), r * Math.sin(t), s * Math.sin(t / 2));
		}
	}
	const idx: number[] = [];
	for (let i = 0; i < n; i++) {
		const a = 2 * i, b = 2 * i + 1;
		const last = i === n - 1;
		const c = last ? 1 : 2 * (i + 1), d = last ? 0 : 2 * (i + 1) + 1; // the half twist swaps the two rims
		idx.push(a, c, b, b, c, d);
	}
	return { positions: new Float64Array(pos), indices: new Uint32Array(idx) };
}

describe('repair change measures', () => {
	it('unit cube: area 6 and volume 1 (analytic); an open cube has no volume', () => {
		const m = areaAndVolume(cube());
		expect(m.area).toBeCloseTo(6, 12);
		expect(m.volume).toBeCloseTo(1, 12);
		const open = cube();
		expect(areaAndVolume({ positions: open.positions, indices: open.indices.slice(0, 30) }).volume).toBeNull();
	});

	it('judges each measure against its limit and names those outside', () => {
		const j = judgeRepair({ facesBefore: 995640, facesAfter: 23164, areaBefore: 100, areaAfter: 101, volumeBefore: 50, volumeAfter: 59.25, deviation: 3.3 }, LIMITS, 0.005, 'm');
		expect(j.within).toBe(false);
		expect(j.reason).toContain('volume +18.5 % against a limit of ±1 %');
		expect(j.reason).toContain('faces 995,640 → 23,164');
		expect(j.reason).toContain('surface moved up to 3.3 m against a limit of 0.0025 m');
		expect(j.reason).not.toContain('area');
	});

	it('writes a move within round-off of the part (an exact weld) as 0, in the limit\'s unit, and a real move as measured', () => {
		const weld = judgeRepair({ facesBefore: 12, facesAfter: 12, areaBefore: 60000, areaAfter: 60000, volumeBefore: 1e6, volumeAfter: 1e6, deviation: 8.565e-15 }, LIMITS, 2, 'mm');
		expect(weld.lines.find((l) => l.measure === 'deviation')!.text).toBe('surface moved up to 0 mm against a limit of 1 mm');
		const real = judgeRepair({ facesBefore: 12, facesAfter: 12, areaBefore: 60000, areaAfter: 60000, volumeBefore: 1e6, volumeAfter: 1e6, deviation: 0.0123 }, LIMITS, 2, 'mm');
		expect(real.lines.find((l) => l.measure === 'deviation')!.text).toBe('surface moved up to 0.0123 mm against a limit of 1 mm');
	});

	it('with a rescale by F compares volume with F³·V and area with F²·A', () => {
		const j = judgeRepair({ facesBefore: 12, facesAfter: 12, areaBefore: 6, areaAfter: 6e6, volumeBefore: 1, volumeAfter: 1e9, deviation: 0, scaleFactor: 1000 }, LIMITS, 1);
		expect(j.within).toBe(true);
	});

	it('says volume was not comparable on an open mesh and judges the rest', () => {
		const j = judgeRepair({ facesBefore: 10, facesAfter: 10, areaBefore: 5, areaAfter: 5, volumeBefore: null, volumeAfter: 1, deviation: 0 }, LIMITS, 1);
		expect(j.within).toBe(true);
		expect(j.lines[0].text).toMatch(/volume not comparable/);
	});

	it('orient on a Möbius strip leaves it alone and says it cannot orient it', () => {
		const m = mobius();
		const r = orientConsistently(m);
		expect(r.counts.nonOrientableShells).toBe(1);
		expect(sameMesh(m, r.mesh)).toBe(true);
		const lines = skippedItems([{ op: 'orient', params: {}, counts: r.counts, facesBefore: 48, facesAfter: 48, ms: 0 }]);
		expect(lines[0]).toMatch(/not oriented: it is non-orientable \(one-sided, like a Möbius strip\)/);
	});

	it('reports a hole left by fill-holes with its size and why', () => {
		const lines = skippedItems([{ op: 'fill-holes', params: { op: 'fill-holes', maxPerimeter: 0.2 }, counts: { holesFilled: 0, trianglesAdded: 0, holesLeft: [{ reason: 'perimeter-too-long', edgeCount: 60, perimeter: 40.4, centroid: [0, 0, 0] }] }, facesBefore: 1, facesAfter: 1, ms: 0 }]);
		expect(lines).toEqual(['hole 40.4 around (60 edges) skipped: above the 0.2 limit']);
	});
});
