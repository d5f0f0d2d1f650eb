// Waking this process's idle worker loops when this process has just queued a job, so an upload,
// re-check or repair starts at once instead of after the loop's idle poll. The poll stays as the
// fallback: jobs queued by another process (a web process beside `npm run worker`, or the other way
// round) are found on the next poll, and a wake that finds nothing to claim costs one claim query.
//
// The signal travels as a process event: the code that queues a job knows nothing of the loops,
// and the `JobWake` that listens belongs to the loops' owner (background.ts, standalone.ts), which
// closes it when the loops stop.

const JOBS_QUEUED = 'shellgate:jobs-queued';

/**
 * Tells this process's worker loops that a job was queued. Call it after the transaction that
 * inserted the job committed: a loop woken before the commit finds nothing and sleeps on.
 */
export function jobsQueued(): void {
	(process.emit as (event: string) => boolean)(JOBS_QUEUED);
}

/**
 * The wake-up signal of a set of worker loops. A loop reads `mark` before it looks for a job and
 * passes it to `sleep`, which then returns at once when a job was queued in between, so a wake-up
 * that comes while the loop is asking the database is not lost.
 */
export class JobWake {
	private generation = 0;
	private readonly sleepers = new Set<() => void>();
	private readonly onQueued = () => this.notify();
	private listening = false;

	/** Listens for `jobsQueued()` in this process until `close()`. */
	listen(): this {
		if (!this.listening) process.on(JOBS_QUEUED as 'exit', this.onQueued);
		this.listening = true;
		return this;
	}

	/** Stops listening and wakes every sleeper (which then sees its loop's abort signal). */
	close(): void {
		if (this.listening) process.off(JOBS_QUEUED as 'exit', this.onQueued);
		this.listening = false;
		this.notify();
	}

	/** Changes whenever a job was queued; read it before looking for a job. */
	get mark(): number {
		return this.generation;
	}

	/** Wakes every sleeping loop; each looks for a job, and SKIP LOCKED gives each job to one of them. */
	notify(): void {
		this.generation++;
		for (const wake of [...this.sleepers]) wake();
	}

	/**
	 * Sleeps `ms`, or until a job is queued or `signal` aborts. Returns at once when a job was queued
	 * since `mark` was read (or the signal already aborted). True when woken by a queued job.
	 */
	sleep(ms: number, signal: AbortSignal, mark = this.generation): Promise<boolean> {
		if (signal.aborted) return Promise.resolve(false);
		if (mark !== this.generation) return Promise.resolve(true);
		return new Promise<boolean>((resolve) => {
			const done = (woken: boolean) => {
				clearTimeout(timer);
				signal.removeEventListener('abort', onAbort);
				this.sleepers.delete(onWake);
				resolve(woken);
			};
			const onWake = () => done(true);
			const onAbort = () => done(false);
			const timer = setTimeout(() => done(false), ms);
			signal.addEventListener('abort', onAbort, { once: true });
			this.sleepers.add(onWake);
		});
	}
}
