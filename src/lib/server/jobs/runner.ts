// Worker loops: claim a job, process it, repeat; when the queue is empty, sleep until this process
// queues a job (wake.ts) or `idleMs` passed, whichever comes first. The loop itself only does
// database I/O; the engine always runs in a worker thread (see check.ts).
import { hostname } from 'node:os';
import { config } from '../config';
import type { Db } from '../db';
import { processCheckJob } from './check';
import { processRepairJob } from './repair';
import { claimJob } from './queue';
import { JobWake } from './wake';

export interface WorkerLoopOptions {
	db: () => Db;
	workerId?: string;
	/** Longest sleep on an empty queue, for jobs queued by other processes (default 500 ms). */
	idleMs?: number;
	/** Ends an idle sleep early when this process queues a job; the loops' owner listens and closes it. */
	wake?: JobWake;
	signal: AbortSignal;
	onResult?: (jobId: number, outcome: string) => void;
}

export function newWorkerId(tag = 'web'): string {
	return `${hostname()}:${process.pid}:${tag}:${Math.random().toString(36).slice(2, 6)}`;
}

const sleep = (ms: number, signal: AbortSignal) =>
	new Promise<void>((resolve) => {
		const done = () => {
			clearTimeout(t);
			signal.removeEventListener('abort', done);
			resolve();
		};
		const t = setTimeout(done, ms);
		signal.addEventListener('abort', done, { once: true });
	});

export async function runWorkerLoop(opts: WorkerLoopOptions): Promise<void> {
	const workerId = opts.workerId ?? newWorkerId();
	const idle = opts.idleMs ?? 500;
	const wake = opts.wake ?? new JobWake();
	while (!opts.signal.aborted) {
		try {
			// Read before the claim: a job queued while the claim runs ends the sleep below at once.
			const mark = wake.mark;
			const j = await claimJob(opts.db(), workerId);
			if (!j) {
				await wake.sleep(idle, opts.signal, mark);
				continue;
			}
			const outcome = await (j.kind === 'repair' ? processRepairJob : processCheckJob)(opts.db(), j, workerId, { timeLimitMs: config.checkTimeLimitMs, memoryLimitMb: config.checkMemoryLimitMb }, opts.signal);
			opts.onResult?.(j.id, outcome);
		} catch (e) {
			// Database down or a write failed: the lease runs out and the job is claimed again later.
			if (!opts.signal.aborted) console.error(`[shellgate worker ${workerId}]`, (e as Error).message);
			await sleep(Math.max(idle, 2000), opts.signal);
		}
	}
}
