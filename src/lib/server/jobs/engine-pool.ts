// Engine threads kept between tasks. Starting a thread costs module loading and JIT warm-up in it,
// and the threads it starts for self-intersections; a thread that stays alive pays that once, so
// every check after the first runs warm. One task runs in a thread at a time. A thread that ran
// past its time limit, was cancelled, crashed or reported an internal error is terminated, never
// reused; idle threads are unref'd (they never keep the process alive) and end after `idleMs`.
// `warm()` starts `keepWarm` threads ahead of the first task (the server calls it at start) and each
// runs small warm-up checks through every stage a real check runs, on the thread and on its worker
// threads (engine-thread.ts warmUp), so the first real check is not the slow one. Memory: a thread keeps
// what its largest task grew it to, so one that ran a large file (`retireBytes`) ends after
// `retireIdleMs` idle and a fresh warm one takes its place.
import type { Worker } from 'node:worker_threads';
import { spawnModuleWorker } from '../../mesh/module-worker-node';
import type { EngineMessage, EngineRequest, EngineTask, EngineThreadData } from './engine-thread';

export interface EngineLimits {
	timeLimitMs: number;
	memoryLimitMb: number;
}

export class EngineRefused extends Error {}

interface Slot {
	w: Worker;
	memoryLimitMb: number;
	idleTimer: ReturnType<typeof setTimeout> | null;
	/** Set once the thread ran a task of retireBytes or more. */
	big: boolean;
	/** Set when a task took this thread while it was still warming up. */
	claimed?: boolean;
}

export interface EnginePoolOptions {
	/** Module URL and tag of the engine thread (engine-thread.ts reports its own). */
	url: string;
	tag: string;
	niceness: number;
	maxIdle: number;
	idleMs: number;
	/** Threads kept started and warm while idle, once warm() was called (default 0). */
	keepWarm?: number;
	/** Worker threads a check of a kept thread starts (the `threads` of its check tasks): the warm-up runs on as many. Default one per core less the engine thread (defaultSelfIntersectThreads). */
	warmThreads?: number;
	/** A task input this large marks its thread for retirement when next idle (default 24 MB, about 500 k faces of binary STL). */
	retireBytes?: number;
	/** How long such a thread stays idle before it ends (default 5 s). */
	retireIdleMs?: number;
}

const DEFAULT_RETIRE_BYTES = 24 * 1024 * 1024;
const DEFAULT_RETIRE_IDLE_MS = 5_000;

export class EnginePool {
	private idle: Slot[] = [];
	/** Threads running their warm-up, which a task may take rather than start a cold thread. */
	private warmingSlots: Slot[] = [];
	private nextId = 1;
	/** Memory limit of the threads warm() keeps; null until warm() is called. */
	private warmLimitMb: number | null = null;
	private warming = 0;
	private closed = false;
	constructor(private readonly opts: EnginePoolOptions) {}

	/**
	 * Starts threads until `keepWarm` are idle or warming, each running a small warm-up check, and
	 * keeps that many from then on (a retired or failed thread is replaced). Resolves when they are warm.
	 */
	warm(memoryLimitMb: number): Promise<void> {
		this.warmLimitMb = memoryLimitMb;
		this.closed = false;
		return this.topUp();
	}

	private topUp(): Promise<void> {
		const want = this.opts.keepWarm ?? 0;
		const limitMb = this.warmLimitMb;
		if (limitMb === null || this.closed) return Promise.resolve();
		const started: Promise<void>[] = [];
		while (this.idle.filter((s) => s.memoryLimitMb === limitMb).length + this.warming < want) {
			this.warming++;
			const slot = this.spawn(limitMb);
			this.warmingSlots.push(slot);
			const id = this.nextId++;
			started.push(
				new Promise<void>((resolve) => {
					const done = (ok: boolean) => {
						slot.w.off('message', onMessage);
						slot.w.off('exit', onExit);
						const k = this.warmingSlots.indexOf(slot);
						if (k >= 0) this.warmingSlots.splice(k, 1);
						// A task that took the thread meanwhile (take()) owns it now and releases it.
						if (!slot.claimed) {
							this.warming--;
							if (ok && !this.closed) this.release(slot);
							else void slot.w.terminate();
						}
						resolve();
					};
					const onMessage = (m: EngineMessage & { id?: number }) => {
						if (m.id === id && m.type !== 'progress') done(m.type === 'done');
					};
					const onExit = () => done(false);
					slot.w.on('message', onMessage);
					slot.w.on('exit', onExit);
					// Kept referenced while warming (a caller awaiting warm() sees it finish); idle, it is unref'd.
					slot.w.postMessage({ id, input: { task: 'warm', threads: this.opts.warmThreads } } satisfies EngineRequest);
				})
			);
		}
		return Promise.all(started).then(() => {});
	}

	/** Runs one task; rejects with EngineRefused when the engine refused the input (unreadable file, impossible recipe). */
	run<T>(input: EngineTask, limits: EngineLimits, onProgress: (stage: string, percent: number) => void, signal?: AbortSignal): Promise<T> {
		if (signal?.aborted) return Promise.reject(new Error('The work was cancelled.'));
		const slot = this.take(limits.memoryLimitMb);
		const id = this.nextId++;
		const { w } = slot;
		return new Promise<T>((resolve, reject) => {
			let settled = false;
			const finish = (keep: boolean, fn: () => void) => {
				if (settled) return;
				settled = true;
				clearTimeout(timer);
				signal?.removeEventListener('abort', onAbort);
				w.off('message', onMessage);
				w.off('error', onError);
				w.off('exit', onExit);
				if (keep) this.release(slot);
				else {
					void w.terminate();
					void this.topUp();
				}
				fn();
			};
			const onAbort = () => finish(false, () => reject(new Error('The work was cancelled.')));
			const onMessage = (m: EngineMessage & { id?: number }) => {
				if (m.id !== id) return;
				if (m.type === 'progress') onProgress(m.stage, m.percent);
				else if (m.type === 'done') finish(true, () => resolve(m.result as T));
				else if (m.type === 'refused') finish(true, () => reject(new EngineRefused(m.message)));
				else finish(false, () => reject(new Error(m.message)));
			};
			const onError = (e: Error) => {
				const msg = /ERR_WORKER_OUT_OF_MEMORY|heap/i.test(String((e as { code?: string }).code ?? e.message))
					? `The engine ran out of its memory allowance (${limits.memoryLimitMb} MB).`
					: `The engine stopped: ${e.message}`;
				finish(false, () => reject(new Error(msg)));
			};
			const onExit = (code: number) => finish(false, () => reject(new Error(`The engine thread exited (code ${code}) before finishing.`)));
			const timer = setTimeout(
				() => finish(false, () => reject(new Error(`The engine ran past its time limit of ${Math.round(limits.timeLimitMs / 1000)} s.`))),
				limits.timeLimitMs
			);
			signal?.addEventListener('abort', onAbort);
			w.on('message', onMessage);
			w.on('error', onError);
			w.on('exit', onExit);
			w.ref();
			if (input.bytes.byteLength >= (this.opts.retireBytes ?? DEFAULT_RETIRE_BYTES)) slot.big = true;
			// Bytes handed over once are detached here (a caller reusing them): postMessage would drop
			// the task without a word and the check would wait out its time limit. The thread never
			// sees it and stays kept.
			if (isDetached(input.bytes.buffer)) {
				finish(true, () => reject(new Error('The mesh bytes were already handed to an engine thread; pass a fresh copy.')));
				return;
			}
			w.postMessage({ id, input } satisfies EngineRequest, [input.bytes.buffer as ArrayBuffer]);
		});
	}

	/** Terminates the idle threads (running tasks finish on their own threads). */
	async close(): Promise<void> {
		this.closed = true;
		const slots = this.idle.splice(0, this.idle.length);
		await Promise.all(
			slots.map((s) => {
				if (s.idleTimer) clearTimeout(s.idleTimer);
				return s.w.terminate();
			})
		);
	}

	get idleCount(): number {
		return this.idle.length;
	}

	/** Thread ids of the idle threads (to tell a fresh thread from a kept one). */
	get idleThreadIds(): number[] {
		return this.idle.map((s) => s.w.threadId);
	}

	private take(memoryLimitMb: number): Slot {
		const k = this.idle.findIndex((s) => s.memoryLimitMb === memoryLimitMb);
		if (k >= 0) {
			const [slot] = this.idle.splice(k, 1);
			if (slot.idleTimer) clearTimeout(slot.idleTimer);
			slot.idleTimer = null;
			return slot;
		}
		// A thread still warming up has its modules loaded and part of its code compiled: it runs
		// the task once its current warm-up round ends, sooner than a cold thread would start.
		const w = this.warmingSlots.findIndex((s) => s.memoryLimitMb === memoryLimitMb);
		if (w >= 0) {
			const [slot] = this.warmingSlots.splice(w, 1);
			slot.claimed = true;
			this.warming--;
			return slot;
		}
		return this.spawn(memoryLimitMb);
	}

	private spawn(memoryLimitMb: number): Slot {
		const data: EngineThreadData = { niceness: this.opts.niceness };
		const w = spawnModuleWorker(this.opts.url, this.opts.tag, data as unknown as Record<string, unknown>, { resourceLimits: { maxOldGenerationSizeMb: memoryLimitMb } });
		const slot: Slot = { w, memoryLimitMb, idleTimer: null, big: false };
		// A thread that dies while idle leaves the pool.
		w.once('exit', () => {
			const i = this.idle.indexOf(slot);
			if (i >= 0) this.idle.splice(i, 1);
		});
		return slot;
	}

	private release(slot: Slot): void {
		slot.claimed = false;
		if (this.idle.length >= this.opts.maxIdle) {
			void slot.w.terminate();
			return;
		}
		slot.w.unref();
		// The warm threads stay while idle, unless one grew large; others end after idleMs.
		const kept = this.warmLimitMb === slot.memoryLimitMb && this.idle.filter((s) => s.memoryLimitMb === slot.memoryLimitMb && !s.big).length < (this.opts.keepWarm ?? 0);
		if (slot.big || !kept) {
			slot.idleTimer = setTimeout(
				() => {
					const i = this.idle.indexOf(slot);
					if (i >= 0) this.idle.splice(i, 1);
					void slot.w.terminate();
					void this.topUp();
				},
				slot.big ? (this.opts.retireIdleMs ?? DEFAULT_RETIRE_IDLE_MS) : this.opts.idleMs
			);
			slot.idleTimer.unref();
		}
		this.idle.push(slot);
	}
}

/** Whether a buffer was transferred away (slice throws on a detached ArrayBuffer). */
function isDetached(buf: ArrayBufferLike): boolean {
	try {
		buf.slice(0, 0);
		return false;
	} catch {
		return true;
	}
}
