import { readdirSync, readFileSync } from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import type { InspectionReport } from '../../mesh/report';
import { concat, unitCube } from '../../mesh/testing/test-meshes';
import { writeBinaryStl } from '../../mesh/write';
import { EnginePool, EngineRefused } from './engine-pool';
import { ENGINE_THREAD_TAG, ENGINE_THREAD_URL, type EngineTask } from './engine-thread';

const limits = { timeLimitMs: 60_000, memoryLimitMb: 1024 };
const pool = new EnginePool({ url: ENGINE_THREAD_URL, tag: ENGINE_THREAD_TAG, niceness: 7, maxIdle: 1, idleMs: 60_000 });
afterAll(() => pool.close());

const check = (bytes: Uint8Array, fileName = 'cube.stl'): EngineTask => ({ task: 'check', bytes, fileName, options: { fileName }, threads: 1 });

/** Nice values of this process's threads (Linux), from /proc/self/task/<tid>/stat field 19. */
function threadNiceValues(): number[] {
	return readdirSync('/proc/self/task').map((tid) => {
		const stat = readFileSync(`/proc/self/task/${tid}/stat`, 'utf8');
		return Number(stat.slice(stat.lastIndexOf(')') + 2).split(' ')[16]);
	});
}

describe('engine threads kept between tasks', () => {
	it('runs checks one after another in the same kept thread, and a refused file does not cost the thread', async () => {
		const a = await pool.run<InspectionReport>(check(writeBinaryStl(unitCube())), limits, () => {});
		expect(a.faces).toBe(12);
		expect(pool.idleCount).toBe(1);
		await expect(pool.run(check(new TextEncoder().encode('solid x\n facet normal 0 0 1\n'), 'broken.stl'), limits, () => {})).rejects.toBeInstanceOf(EngineRefused);
		expect(pool.idleCount).toBe(1);
		const b = await pool.run<InspectionReport>(check(writeBinaryStl(unitCube([2, 0, 0]))), limits, () => {});
		expect(b.bbox.min[0]).toBe(2);
		expect(pool.idleCount).toBe(1);
	});

	it('refuses bytes already handed to a thread (detached) with a clear error, and keeps the thread', async () => {
		const bytes = writeBinaryStl(unitCube());
		await pool.run(check(bytes), limits, () => {});
		await expect(pool.run(check(bytes), limits, () => {})).rejects.toThrow(/fresh copy/);
		expect(pool.idleCount).toBe(1);
		const again = await pool.run<InspectionReport>(check(writeBinaryStl(unitCube())), limits, () => {});
		expect(again.faces).toBe(12);
	});

	it.runIf(process.platform === 'linux')('lowers the engine thread priority by the configured niceness', async () => {
		await pool.run(check(writeBinaryStl(unitCube())), limits, () => {});
		expect(Math.max(...threadNiceValues())).toBeGreaterThanOrEqual(7);
	});

	it('ends a thread that runs past its time limit and starts a fresh one for the next task', async () => {
		await pool.close();
		await expect(pool.run(check(writeBinaryStl(unitCube())), { ...limits, timeLimitMs: 1 }, () => {})).rejects.toThrow(/time limit/);
		expect(pool.idleCount).toBe(0);
		const r = await pool.run<InspectionReport>(check(writeBinaryStl(unitCube())), limits, () => {});
		expect(r.watertight).toBe(true);
	});

	it('refuses at once when the work was already cancelled', async () => {
		const c = new AbortController();
		c.abort();
		await expect(pool.run(check(writeBinaryStl(unitCube())), limits, () => {}, c.signal)).rejects.toThrow(/cancelled/);
	});

	it('warms threads ahead of the first task, and replaces one that ran a large file once it is idle', async () => {
		const warmPool = new EnginePool({ url: ENGINE_THREAD_URL, tag: ENGINE_THREAD_TAG, niceness: 0, maxIdle: 2, idleMs: 60_000, keepWarm: 1, retireBytes: 1000, retireIdleMs: 50 });
		try {
			await warmPool.warm(limits.memoryLimitMb);
			expect(warmPool.idleCount).toBe(1);
			const [warmId] = warmPool.idleThreadIds;
			// A small file (684 bytes) keeps its thread.
			await warmPool.run(check(writeBinaryStl(unitCube())), limits, () => {});
			expect(warmPool.idleThreadIds).toEqual([warmId]);
			// A file above retireBytes: the thread ends after retireIdleMs and a fresh warm one follows.
			const big = writeBinaryStl(concat(unitCube(), unitCube([2, 0, 0])));
			expect(big.byteLength).toBeGreaterThan(1000);
			await warmPool.run(check(big), limits, () => {});
			expect(warmPool.idleThreadIds).toEqual([warmId]);
			// The fresh thread is idle once its warm-up (every stage of a check, a few seconds; longer beside other test files) is done.
			for (const until = Date.now() + 45_000; Date.now() < until && (warmPool.idleCount !== 1 || warmPool.idleThreadIds[0] === warmId); ) await new Promise((r) => setTimeout(r, 50));
			expect(warmPool.idleCount).toBe(1);
			expect(warmPool.idleThreadIds[0]).not.toBe(warmId);
			const r = await warmPool.run<InspectionReport>(check(writeBinaryStl(unitCube())), limits, () => {});
			expect(r.watertight).toBe(true);
		} finally {
			await warmPool.close();
		}
	}, 90_000);

	it('hands a check sent during the warm-up to the warming thread instead of starting a cold one', async () => {
		const warmPool = new EnginePool({ url: ENGINE_THREAD_URL, tag: ENGINE_THREAD_TAG, niceness: 0, maxIdle: 2, idleMs: 60_000, keepWarm: 1, warmThreads: 0 });
		try {
			const warming = warmPool.warm(limits.memoryLimitMb);
			const r = await warmPool.run<InspectionReport>(check(writeBinaryStl(unitCube())), limits, () => {});
			expect(r.faces).toBe(12);
			await warming;
			// One thread in all: a cold one started for the check would be idle beside it now.
			expect(warmPool.idleCount).toBe(1);
			const again = await warmPool.run<InspectionReport>(check(writeBinaryStl(unitCube([2, 0, 0]))), limits, () => {});
			expect(again.bbox.min[0]).toBe(2);
			expect(warmPool.idleCount).toBe(1);
		} finally {
			await warmPool.close();
		}
	}, 60_000);
});
