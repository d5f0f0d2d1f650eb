import { describe, expect, it } from 'vitest';
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import { coreLooksFree, defaultSelfIntersectThreads, inspectFileNode } from './inspect-node';
import { inspectBytes } from './inspect';
import { writeBinaryStl } from './write';
import { concat, icosphere, torus, unitCube } from './testing/test-meshes';
import { thicknessPool } from './thickness-node';

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

	it('counts on one worker beside the other stages when a core is free (alongsideMinFaces), with the same report, and not when none is', async () => {
		const a = icosphere(3);
		const b = icosphere(3);
		for (let i = 0; i < b.positions.length; i += 3) b.positions[i] += 1;
		const bytes = writeBinaryStl(concat(a, b));
		const one = await inspectFileNode(bytes, 'pods.stl', { threads: 0 });
		const beside = await inspectFileNode(bytes, 'pods.stl', { alongsideMinFaces: 0, coreIsFree: () => true });
		const busy = await inspectFileNode(bytes, 'pods.stl', { alongsideMinFaces: 0, coreIsFree: () => false });
		const small = await inspectFileNode(bytes, 'pods.stl', { alongsideMinFaces: 1e6, coreIsFree: () => true });
		expect(beside.timings.selfIntersectionsWait).toBeDefined();
		for (const r of [one, busy, small]) expect(r.timings.selfIntersectionsWait).toBeUndefined();
		expect(beside.selfIntersectingPairs).toBeGreaterThan(0);
		const strip = (r: typeof one) => ({ ...r, timings: {}, selfIntersectionSample: r.selfIntersectionSample.length });
		for (const r of [beside, busy, small]) expect(strip(r)).toEqual(strip(one));
	});

	it('gives the same report with the wall-and-gap rays on a kept worker beside the report, and hands the worker back', async () => {
		// 48,000 faces: more than one chunk of rays, so the worker takes part.
		const bytes = writeBinaryStl(concat(torus(200, 120, 2, 0.4), icosphere(3, 1)));
		const opts = { cellSize: 0.1, thinCells: 2, flowDirection: [1, 0.25, 0] as [number, number, number] };
		const serial = await inspectFileNode(bytes, 'ring.stl', opts);
		const pool = thicknessPool();
		// No started worker: nothing is started for it, the rays run after the report as before.
		const cold = await inspectFileNode(bytes, 'ring.stl', { ...opts, wallsAlongside: true });
		expect(pool.size).toBe(0);
		expect(cold.timings.wallsWait).toBeUndefined();
		pool.warm(1);
		try {
			const along = await inspectFileNode(bytes, 'ring.stl', { ...opts, wallsAlongside: true });
			expect(along.timings.wallsWait).toBeDefined();
			expect(pool.idleStarted).toBe(1);
			const strip = (r: typeof serial) => ({ ...r, timings: {}, cellSizeChecks: r.cellSizeChecks && { ...r.cellSizeChecks, ms: 0 } });
			expect(along.cellSizeChecks?.narrowestGap).not.toBeNull();
			expect(strip(along)).toEqual(strip(serial));
			expect(strip(cold)).toEqual(strip(serial));
			// A stage that fails after the rays started: the error comes through and the worker is back in the pool.
			await expect(inspectFileNode(bytes, 'ring.stl', { ...opts, flowDirection: [0, 0, 0], wallsAlongside: true })).rejects.toThrow(/flow direction/);
			expect(pool.idleStarted).toBe(1);
		} finally {
			await pool.close();
		}
	});

	it('leaves selfIntersectingPairs null when the stage is skipped', async () => {
		const r = await inspectFileNode(writeBinaryStl(unitCube()), 'cube.stl', { skipSelfIntersections: true });
		expect(r.selfIntersectingPairs).toBeNull();
		expect(r.watertight).toBe(true);
	});

	it('rejects with the reader message when the bytes are no mesh', async () => {
		await expect(inspectFileNode(new Uint8Array([1, 2, 3]), 'junk.bin')).rejects.toThrow(/junk\.bin/);
	});

	it('sees no free core while every core runs a busy thread, and leaves the calling thread a core of its own', async () => {
		const cores = availableParallelism();
		expect(defaultSelfIntersectThreads()).toBe(Math.max(1, cores - 1));
		if (process.platform !== 'linux') return;
		// One spinning thread per core: with this one, more runnable threads than cores, whatever else runs.
		const spin = 'const end = Date.now() + 3000; require("node:worker_threads").parentPort.postMessage(1); while (Date.now() < end) {}';
		const busy = Array.from({ length: cores }, () => new Worker(spin, { eval: true }));
		try {
			await Promise.all(busy.map((w) => new Promise((ok) => w.once('message', ok))));
			expect(coreLooksFree()).toBe(false);
		} finally {
			await Promise.all(busy.map((w) => w.terminate()));
		}
	});
});
