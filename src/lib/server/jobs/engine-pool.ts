// Engine threads kept between tasks. Starting a thread costs module loading and JIT warm-up in it,
// and the threads it starts for self-intersections; a thread that stays alive pays that once, so
// every check after the first runs warm. One task runs in a thread at a time. A thread that ran
// past its time limit, was cancelled, crashed or reported an internal error is terminated, never
// reused; idle threads are unref'd (they never keep the process alive) and end after `idleMs`.
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
}

export interface EnginePoolOptions {
	/** Module URL and tag of the engine thread (engine-thread.ts reports its own). */
	url: string;
	tag: string;
	niceness: number;
	maxIdle: number;
	idleMs: number;
}

export class EnginePool {
	private idle: Slot[] = [];
	private nextId = 1;
	constructor(private readonly opts: EnginePoolOptions) {}

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
				else void w.terminate();
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
			w.postMessage({ id, input } satisfies EngineRequest, [input.bytes.buffer as ArrayBuffer]);
		});
	}

	/** Terminates the idle threads (running tasks finish on their own threads). */
	async close(): Promise<void> {
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

	private take(memoryLimitMb: number): Slot {
		const k = this.idle.findIndex((s) => s.memoryLimitMb === memoryLimitMb);
		if (k >= 0) {
			const [slot] = this.idle.splice(k, 1);
			if (slot.idleTimer) clearTimeout(slot.idleTimer);
			slot.idleTimer = null;
			return slot;
		}
		const data: EngineThreadData = { niceness: this.opts.niceness };
		const w = spawnModuleWorker(this.opts.url, this.opts.tag, data as unknown as Record<string, unknown>, { resourceLimits: { maxOldGenerationSizeMb: memoryLimitMb } });
		const slot: Slot = { w, memoryLimitMb, idleTimer: null };
		// A thread that dies while idle leaves the pool.
		w.once('exit', () => {
			const i = this.idle.indexOf(slot);
			if (i >= 0) this.idle.splice(i, 1);
		});
		return slot;
	}

	private release(slot: Slot): void {
		if (this.idle.length >= this.opts.maxIdle) {
			void slot.w.terminate();
			return;
		}
		slot.w.unref();
		slot.idleTimer = setTimeout(() => {
			const i = this.idle.indexOf(slot);
			if (i >= 0) this.idle.splice(i, 1);
			void slot.w.terminate();
		}, this.opts.idleMs);
		slot.idleTimer.unref();
		this.idle.push(slot);
	}
}
