/**
 * Worker threads kept between calls, with the shared buffers of the largest call kept beside them:
 * one call holds them at a time, and a call that finds them held gets workers of its own. The
 * self-intersection and the wall-and-gap pools both extend it with their own job and buffer shape.
 */
import { availableParallelism } from 'node:os';
import type { Worker } from 'node:worker_threads';

export abstract class KeptWorkers<B> {
	private workers: Worker[] = [];
	private busy = false;
	private closed = false;
	private kept: B | null = null;

	/** spawn: a new worker. keepMax: calls over this size get fresh buffers, not kept ones. */
	protected constructor(
		private readonly spawn: () => Worker,
		private readonly keepMax: number
	) {}

	/** Starts workers up to `threads` (0 starts none) without waiting for them, so a later call does not pay their start-up. */
	warm(threads = availableParallelism()): void {
		if (this.busy) return;
		this.closed = false;
		const n = Math.max(0, Math.floor(threads));
		while (this.workers.length < n) this.workers.push(this.watch(this.spawn()));
	}

	/** Terminates the workers and lets the kept buffers go; a later call starts new ones. */
	async close(): Promise<void> {
		this.closed = true;
		this.kept = null;
		const ws = this.workers.splice(0, this.workers.length);
		await Promise.all(ws.map((w) => w.terminate()));
	}

	get size(): number {
		return this.workers.length;
	}

	/** Started workers a call could hold now without starting any (0 while a call holds them). */
	get idleStarted(): number {
		return this.busy ? 0 : this.workers.length;
	}

	/** `count` workers for one call, started as needed; null while another call holds them. */
	protected holdWorkers(count: number): Worker[] | null {
		if (this.busy) return null;
		this.busy = true;
		this.closed = false;
		while (this.workers.length < count) this.workers.push(this.watch(this.spawn()));
		return this.workers.slice(0, count);
	}

	/**
	 * Buffers for the call holding the workers: the kept ones when `fits` them, else new ones from
	 * `make` (kept unless `size` is over keepMax; the old ones are let go before the new are made).
	 */
	protected keptBuffers(size: number, fits: (b: B) => boolean, make: () => B): B {
		if (size > this.keepMax) return make();
		if (!this.kept || !fits(this.kept)) {
			this.kept = null;
			this.kept = make();
		}
		return this.kept;
	}

	/** The call is over; `failed` workers (already terminated) leave the pool. */
	release(failed: Worker[]): void {
		for (const w of failed) this.drop(w);
		this.busy = false;
		if (this.closed) void this.close();
	}

	private drop(w: Worker): void {
		const k = this.workers.indexOf(w);
		if (k >= 0) this.workers.splice(k, 1);
	}

	private watch(w: Worker): Worker {
		// A worker that dies while idle (or is terminated) leaves the pool.
		w.once('exit', () => this.drop(w));
		return w;
	}
}
