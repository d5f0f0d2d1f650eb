import { describe, expect, it } from 'vitest';
import { removeSmallShells } from './remove-small-shells';
import { FORMATS, implicitMesh, inspect, roundTrip, specks } from '../testing/repair-support';
import { towBody } from '../testing/implicit-shapes';
import { concat, unitCube } from '../testing/test-meshes';

describe.each(FORMATS)('removeSmallShells, mesh read back from %s', (_name, write, file) => {
	it('removes three floating specks around a tow body and keeps the body whole', () => {
		const body = implicitMesh(towBody(1), 0.12);
		const m = roundTrip(concat(body, ...specks([[0, 1.2, 0], [1, -1, 0.3], [-2, 0, 1]], 0.03)), write, file);
		expect(inspect(m).components).toBe(4);
		const r = removeSmallShells(m, { maxAreaShare: 0.001 });
		expect(r.counts.shellsBefore).toBe(4);
		expect(r.counts.shellsRemoved).toBe(3);
		expect(r.counts.facesRemoved).toBe(3 * 80);
		const rep = inspect(r.mesh);
		expect(rep.components).toBe(1);
		expect(rep.faces).toBe(body.indices.length / 3);
		expect(rep.watertight).toBe(true);
	});
});

describe('removeSmallShells', () => {
	it('never removes the largest shell, even when every shell is under the threshold', () => {
		const r = removeSmallShells(concat(unitCube(), unitCube([3, 0, 0])), { maxAreaShare: 0.9 });
		expect(r.counts.shellsRemoved).toBe(1);
		expect(inspect(r.mesh).components).toBe(1);
	});

	it('removes a shell only when it is below every threshold given', () => {
		const m = concat(implicitMesh(towBody(1), 0.2), ...specks([[0, 2, 0]], 0.05));
		expect(removeSmallShells(m, { maxAreaShare: 0.01, maxFaces: 10 }).counts.shellsRemoved).toBe(0);
		expect(removeSmallShells(m, { maxAreaShare: 0.01, maxFaces: 100 }).counts.shellsRemoved).toBe(1);
		expect(removeSmallShells(m, { maxVolumeShare: 0.01 }).counts.shellsRemoved).toBe(1);
	});

	it('asks for a threshold', () => {
		expect(() => removeSmallShells(unitCube(), {})).toThrow(/at least one of maxFaces/);
		expect(() => removeSmallShells(unitCube(), { maxAreaShare: -1 })).toThrow(/non-negative/);
	});
});
