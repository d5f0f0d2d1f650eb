import { describe, expect, it } from 'vitest';
import { inspectFileNode } from './inspect-node';
import { inspectBytes } from './inspect';
import { writeBinaryStl } from './write';
import { concat, icosphere, unitCube } from './testing/test-meshes';

describe('inspectFileNode', () => {
	it('gives the same report as the one-thread inspection, timings and sample choice aside', async () => {
		// Two overlapping spheres: self-intersections that the worker threads must find.
		const a = icosphere(3);
		const b = icosphere(3);
		for (let i = 0; i < b.positions.length; i += 3) b.positions[i] += 1;
		const bytes = writeBinaryStl(concat(a, b));
		const stages: string[] = [];
		const par = await inspectFileNode(bytes, 'pods.stl', { threads: 2, workerMinFaces: 0, onProgress: (s) => stages.push(s) });
		const seq = inspectBytes(bytes, 'pods.stl');
		expect(par.selfIntersectingPairs).toBeGreaterThan(0);
		// Which pairs make the sample depends on how the shards finish; the count does not.
		const strip = (r: typeof par) => ({ ...r, timings: {}, selfIntersectionSample: r.selfIntersectionSample.length });
		expect(strip(par)).toEqual(strip(seq));
		expect(stages[0]).toBe('read');
		expect(stages).toContain('topology');
		expect(stages.at(-1)).toBe('done');
	});

	it('counts on the calling thread below the worker threshold, with the same report', async () => {
		const a = icosphere(2);
		const b = icosphere(2);
		for (let i = 0; i < b.positions.length; i += 3) b.positions[i] += 1;
		const bytes = writeBinaryStl(concat(a, b));
		const one = await inspectFileNode(bytes, 'pods.stl');
		const workers = await inspectFileNode(bytes, 'pods.stl', { threads: 2, workerMinFaces: 0 });
		expect(one.timings.selfIntersectionsWait).toBeUndefined();
		expect(workers.timings.selfIntersectionsWait).toBeDefined();
		const strip = (r: typeof one) => ({ ...r, timings: {}, selfIntersectionSample: r.selfIntersectionSample.length });
		expect(strip(one)).toEqual(strip(workers));
	});

	it('leaves selfIntersectingPairs null when the stage is skipped', async () => {
		const r = await inspectFileNode(writeBinaryStl(unitCube()), 'cube.stl', { skipSelfIntersections: true });
		expect(r.selfIntersectingPairs).toBeNull();
		expect(r.watertight).toBe(true);
	});

	it('rejects with the reader message when the bytes are no mesh', async () => {
		await expect(inspectFileNode(new Uint8Array([1, 2, 3]), 'junk.bin')).rejects.toThrow(/junk\.bin/);
	});
});
