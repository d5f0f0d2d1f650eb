import { describe, expect, it } from 'vitest';
import { orientConsistently } from './orient';
import { FORMATS, facesNear, implicitMesh, inspect, roundTrip, surfacePoint } from '../testing/repair-support';
import { sphere, towBody } from '../testing/implicit-shapes';
import { flipFaces, mobiusStrip, withoutFaces } from '../testing/test-meshes';
import { expectClose } from '../testing/test-close';

describe.each(FORMATS)('orientConsistently, mesh read back from %s', (_name, write, file) => {
	it('turns a flipped patch of a tow body back so every edge is used once each way', () => {
		const clean = implicitMesh(towBody(1), 0.12);
		const patch = facesNear(clean, surfacePoint(clean, [0, 1, 0]), 0.3);
		const m = roundTrip(flipFaces(clean, patch), write, file);
		const before = inspect(m);
		expect(before.consistentlyOriented).toBe(false);
		const r = orientConsistently(m);
		expect(r.counts.facesFlipped).toBe(patch.length);
		expect(r.counts.shellsInverted).toBe(0);
		const rep = inspect(r.mesh);
		expect(rep.consistentlyOriented).toBe(true);
		expect(rep.volume).toBeGreaterThan(0);
		// Divergence theorem: same volume as the clean mesh (STL rounds coordinates to float32).
		expectClose(rep.volume!, inspect(clean).volume!, 1e-5, 'volume');
	});

	it('turns an inside-out sphere outward (positive volume)', () => {
		const clean = implicitMesh(sphere(1), 0.15);
		const all = Array.from({ length: clean.indices.length / 3 }, (_, t) => t);
		const m = roundTrip(flipFaces(clean, all), write, file);
		expect(inspect(m).volume).toBeLessThan(0);
		const r = orientConsistently(m);
		expect(r.counts.shellsInverted).toBe(1);
		expect(r.counts.facesFlipped).toBe(all.length);
		expect(inspect(r.mesh).volume).toBeGreaterThan(0);
	});
});

describe('orientConsistently', () => {
	it('orients an open sphere (holes) outward too, judged about its vertex mean', () => {
		const clean = implicitMesh(sphere(1), 0.15);
		const holed = withoutFaces(clean, facesNear(clean, [0, 0, 1], 0.3));
		const all = Array.from({ length: holed.indices.length / 3 }, (_, t) => t);
		const r = orientConsistently(flipFaces(holed, all.filter((t) => t % 3 === 0)));
		const rep = inspect(r.mesh);
		expect(rep.consistentlyOriented).toBe(true);
		expect(rep.volume).toBeNull(); // open surface: the report leaves volume undefined
		// Outward: the divergence sum over the open faces is still positive.
		const p = r.mesh.positions, ix = r.mesh.indices;
		let v6 = 0;
		for (let t = 0; t < ix.length; t += 3) {
			const a = 3 * ix[t], b = 3 * ix[t + 1], c = 3 * ix[t + 2];
			v6 += p[a] * (p[b + 1] * p[c + 2] - p[b + 2] * p[c + 1]) - p[a + 1] * (p[b] * p[c + 2] - p[b + 2] * p[c]) + p[a + 2] * (p[b] * p[c + 1] - p[b + 1] * p[c]);
		}
		expect(v6).toBeGreaterThan(0);
	});

	it('reports a Möbius strip as non-orientable and leaves it unchanged', () => {
		const m = mobiusStrip();
		const r = orientConsistently(m);
		expect(r.counts.nonOrientableShells).toBe(1);
		expect(r.counts.facesFlipped).toBe(0);
		expect(Array.from(r.mesh.indices)).toEqual(Array.from(m.indices));
	});
});
