/**
 * Parallel self-intersection count on Node worker_threads.
 *
 * How the workers load: each worker is a tiny eval'd script that imports this very module (by its
 * own `import.meta.url`) and calls `runSelfIntersectWorker()`. That keeps working unchanged when a
 * bundler (SvelteKit adapter-node) folds this file into a server chunk, since the URL then names
 * that chunk. When the URL is TypeScript source (under tsx or vitest), the eval'd script first
 * requires tsx's CommonJS hook (`tsx/cjs`, resolved from this file's location, so the current
 * directory does not matter) and then requires this file. Measured on Node 20.20: a worker started
 * with `execArgv: ['--import', 'tsx']` (or tsx's loader file) still fails with "Unknown file
 * extension .ts", and tsx's ESM `register()` API fails inside an eval'd worker, while the CommonJS
 * hook works, including for ESM-only dependencies such as robust-predicates.
 *
 * Work split: the mesh buffers are copied once into SharedArrayBuffers; every worker builds the
 * same deterministic BVH and task list (self-intersect.ts `makeTasks`), then takes tasks from a
 * shared Atomics counter until none are left. Tasks partition the face-pair space, so the shard
 * counts sum exactly to the single-threaded count. Samples are merged, sorted by face ids, capped.
 *
 * Cancellation: pass an AbortSignal; all workers are terminated and the promise rejects.
 */
import { availableParallelism } from 'node:os';
import { createRequire } from 'node:module';
import { Worker, isMainThread, parentPort, workerData } from 'node:worker_threads';
import {
	DEFAULT_SAMPLE_LIMIT,
	DEFAULT_TASK_TARGET,
	findInPrepared,
	prepareMesh,
	type SelfIntersectionResult
} from './self-intersect';
import type { MeshBuffers } from './types';

export interface ParallelSelfIntersectionOptions {
	sampleLimit?: number;
	/** Worker count; default os.availableParallelism(). */
	threads?: number;
	signal?: AbortSignal;
}

interface WorkerInput {
	kind: 'shellgate-self-intersect';
	positions: SharedArrayBuffer;
	positionCount: number;
	indices: SharedArrayBuffer;
	indexCount: number;
	counter: SharedArrayBuffer;
	sampleLimit: number;
	taskTarget: number;
}

interface WorkerOutput {
	result?: SelfIntersectionResult;
	error?: string;
}

/** Worker side: run the shards handed out by the shared counter and post the partial result. */
export function runSelfIntersectWorker(): void {
	if (isMainThread || !parentPort) throw new Error('runSelfIntersectWorker must run inside a worker thread.');
	const input = workerData as WorkerInput;
	const port = parentPort;
	try {
		const t0 = performance.now();
		const mesh: MeshBuffers = {
			positions: new Float64Array(input.positions, 0, input.positionCount),
			indices: new Uint32Array(input.indices, 0, input.indexCount)
		};
		const prep = prepareMesh(mesh);
		const counter = new Int32Array(input.counter);
		const result = findInPrepared(
			prep,
			{ sampleLimit: input.sampleLimit, taskTarget: input.taskTarget, shard: { nextTask: () => Atomics.add(counter, 0, 1) } },
			performance.now() - t0
		);
		port.postMessage({ result } satisfies WorkerOutput);
	} catch (e) {
		port.postMessage({ error: e instanceof Error ? e.message : String(e) } satisfies WorkerOutput);
	}
}

/** tsx's CommonJS hook when this module runs as TypeScript source, else null. */
function tsxHookPath(): string | null {
	if (!/\.(c|m)?ts$/.test(new URL(import.meta.url).pathname)) return null;
	return createRequire(import.meta.url).resolve('tsx/cjs');
}

const WORKER_SOURCE = `
const { workerData } = require('node:worker_threads');
if (workerData.tsxHook) {
	require(workerData.tsxHook);
	require(require('node:url').fileURLToPath(workerData.moduleUrl)).runSelfIntersectWorker();
} else {
	import(workerData.moduleUrl).then((m) => m.runSelfIntersectWorker());
}
`;

/** Counts self-intersecting face pairs on worker threads; same result as findSelfIntersections. */
export async function findSelfIntersectionsParallel(mesh: MeshBuffers, opts: ParallelSelfIntersectionOptions = {}): Promise<SelfIntersectionResult> {
	const t0 = performance.now();
	const threads = Math.max(1, Math.floor(opts.threads ?? availableParallelism()));
	const sampleLimit = opts.sampleLimit ?? DEFAULT_SAMPLE_LIMIT;
	if (opts.signal?.aborted) throw new Error('Self-intersection check was cancelled.');
	const posBuf = new SharedArrayBuffer(mesh.positions.byteLength);
	new Float64Array(posBuf).set(mesh.positions);
	const idxBuf = new SharedArrayBuffer(mesh.indices.byteLength);
	new Uint32Array(idxBuf).set(mesh.indices);
	const counter = new SharedArrayBuffer(4);
	const data: WorkerInput & { moduleUrl: string; tsxHook: string | null } = {
		kind: 'shellgate-self-intersect',
		moduleUrl: import.meta.url,
		tsxHook: tsxHookPath(),
		positions: posBuf,
		positionCount: mesh.positions.length,
		indices: idxBuf,
		indexCount: mesh.indices.length,
		counter,
		sampleLimit,
		taskTarget: Math.max(DEFAULT_TASK_TARGET, 64 * threads)
	};
	const workers: Worker[] = [];
	const stopAll = () => {
		for (const w of workers) void w.terminate();
	};
	const onAbort = () => stopAll();
	opts.signal?.addEventListener('abort', onAbort, { once: true });
	try {
		const parts = await Promise.all(
			Array.from({ length: threads }, () => {
				const w = new Worker(WORKER_SOURCE, { eval: true, workerData: data });
				workers.push(w);
				return new Promise<SelfIntersectionResult>((resolve, reject) => {
					w.once('message', (msg: WorkerOutput) => (msg.result ? resolve(msg.result) : reject(new Error(msg.error ?? 'Self-intersection worker failed.'))));
					w.once('error', reject);
					w.once('exit', (code) => {
						if (opts.signal?.aborted) reject(new Error('Self-intersection check was cancelled.'));
						else reject(new Error(`Self-intersection worker stopped early (exit code ${code}).`));
					});
				});
			})
		);
		const sample = parts.flatMap((p) => p.sample);
		sample.sort((x, y) => x.a - y.a || x.b - y.b);
		sample.length = Math.min(sample.length, sampleLimit);
		const buildMs = Math.max(...parts.map((p) => p.stats?.buildMs ?? 0));
		return {
			pairs: parts.reduce((s, p) => s + p.pairs, 0),
			sample,
			degenerateSkipped: parts[0].degenerateSkipped,
			ms: performance.now() - t0,
			stats: {
				buildMs,
				traverseMs: Math.max(...parts.map((p) => p.stats?.traverseMs ?? 0)),
				candidatePairs: parts.reduce((s, p) => s + (p.stats?.candidatePairs ?? 0), 0),
				exactTests: parts.reduce((s, p) => s + (p.stats?.exactTests ?? 0), 0),
				tasks: parts.reduce((s, p) => s + (p.stats?.tasks ?? 0), 0)
			}
		};
	} finally {
		opts.signal?.removeEventListener('abort', onAbort);
		stopAll();
	}
}
