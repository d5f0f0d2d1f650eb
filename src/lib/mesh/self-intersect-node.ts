/**
 * Parallel self-intersection count on Node worker_threads.
 *
 * How the workers load: module-worker-node.ts starts a thread that imports this very module by its
 * own `import.meta.url`, and the module-level check at the bottom runs `runSelfIntersectWorker()`
 * there (calling the export by name would break once the bundler renames a chunk's exports).
 * When the URL is TypeScript source (under tsx or vitest), tsx's CommonJS hook is loaded first: a
 * worker started with `execArgv: ['--import', 'tsx']` fails with "Unknown file extension .ts" and
 * tsx's ESM `register()` fails inside an eval'd worker, while the CommonJS hook works, including
 * for ESM-only dependencies such as robust-predicates. The built command line and `vite build`
 * load plain JavaScript.
 *
 * Work split: the mesh buffers are copied once into SharedArrayBuffers. The workers share the
 * setup, with Atomics barriers between the steps: each encodes a share of the faces; worker 0
 * sorts while the last worker lists the faces around each vertex (vertex-fans.ts); each gathers a
 * share of the slots; worker 0 builds the BVH into shared node arrays while the others find the
 * clear vertices in chunks from a shared counter (worker 0 joins when the tree is done). Then
 * each makes the same deterministic task list (self-intersect.ts `makeTasks`) and takes tasks
 * from a shared Atomics counter until none are left. A failing worker rejects the promise and all workers are terminated, so none waits
 * forever at a barrier. Tasks partition the face-pair space, so the shard
 * counts sum exactly to the single-threaded count. Samples are merged, sorted by face ids, capped.
 *
 * Worker pool: starting a worker costs module loading and compiling in the new thread, so workers
 * live in a SelfIntersectPool (an object with a lifetime: warm, start runs, close), created lazily
 * and reused by later runs, with the shared buffers of its last run. Each thread has one default
 * pool (`selfIntersectPool()`); `warmSelfIntersectPool` starts its workers ahead of need
 * (inspect-node.ts calls it before reading the file). Idle workers are unref'd, so a pool never
 * keeps a process alive; they are ref'd only while a run uses them. One run uses a pool at a time;
 * a run that overlaps a running one gets its own workers, terminated after.
 *
 * Cancellation: pass an AbortSignal; all workers are terminated and the promise rejects.
 */
import { availableParallelism } from 'node:os';
import { createRequire } from 'node:module';
import { isMainThread, parentPort, type Worker } from 'node:worker_threads';
import { KeptWorkers } from './kept-workers';
import { isWorkerFor, spawnModuleWorker } from './module-worker-node';

const WORKER_TAG = 'shellgate-self-intersect';
import { buildBvhSorted, bvhFromStore, bvhMaxNodes, type BvhNodeStore } from './bvh';
import {
	DEFAULT_TASK_TARGET,
	LEAF_SIZE,
	codeFrame,
	encodeFaces,
	findInPrepared,
	gatherSlots,
	sortLiveFacesInto,
	type PreparedMesh,
	type SelfIntersectionResult,
	type SlotArrays
} from './self-intersect';
import type { MeshBuffers } from './types';
import { clearVertices, vertexFaces } from './vertex-fans';
import { DEFAULT_SAMPLE_LIMIT } from './tolerances';
import { validateMesh } from './validate';

export interface ParallelSelfIntersectionOptions {
	sampleLimit?: number;
	/** Worker count; default os.availableParallelism(). */
	threads?: number;
	signal?: AbortSignal;
}

/** The shared buffers of one job; each may be larger than the job needs (see newScratch). */
interface SharedBuffers {
	positions: SharedArrayBuffer;
	indices: SharedArrayBuffer;
	/** Per face: 1 = nonzero area. */
	live: SharedArrayBuffer;
	rawCodes: SharedArrayBuffer;
	sortedCodes: SharedArrayBuffer;
	slotFace: SharedArrayBuffer;
	/** Slot arrays, sized for faceCount slots (only liveCount are used). */
	faceOf: SharedArrayBuffer;
	verts: SharedArrayBuffer;
	box: SharedArrayBuffer;
	/** Live faces around each vertex (vertex-fans.ts vertexFaces): vertexCount + 1 starts, 3 × faces entries. */
	fanStart: SharedArrayBuffer;
	fanFaces: SharedArrayBuffer;
	/** Per vertex: 1 = clear (vertex-fans.ts). */
	clear: SharedArrayBuffer;
	/** BVH nodes, built once by worker 0 and read by all (sized for bvhMaxNodes(faceCount)). */
	nodeFirstChild: SharedArrayBuffer;
	nodeStart: SharedArrayBuffer;
	nodeCount: SharedArrayBuffer;
	nodeBounds: SharedArrayBuffer;
}

interface WorkerInput extends SharedBuffers {
	kind: 'shellgate-self-intersect';
	/** Job id, echoed back so a late answer from an earlier job is never taken for this one. */
	job: number;
	/** Which of the `threads` workers of this job this one is. */
	index: number;
	threads: number;
	faceCount: number;
	positionCount: number;
	/** Int32: [0] next task, [1..4] barriers, [5] live face count, [6] BVH node count, [7] 1 once all setup is done, [8] next clear-vertex chunk. */
	control: SharedArrayBuffer;
	sampleLimit: number;
	taskTarget: number;
}

interface WorkerOutput {
	job: number;
	result?: SelfIntersectionResult;
	error?: string;
}

const CTRL_TASK = 0, CTRL_LIVE = 5, CTRL_NODES = 6, CTRL_READY = 7, CTRL_CLEAR = 8;

/** Vertices per chunk of the clear-vertex pass, handed out by a shared counter. */
const CLEAR_CHUNK = 8192;

/** Blocks until all `threads` workers reached barrier `slot` (each slot is used once). */
function barrier(ctrl: Int32Array, slot: number, threads: number): void {
	if (Atomics.add(ctrl, slot, 1) + 1 === threads) {
		Atomics.notify(ctrl, slot);
		return;
	}
	for (let v = Atomics.load(ctrl, slot); v < threads; v = Atomics.load(ctrl, slot)) Atomics.wait(ctrl, slot, v);
}

const share = (from: number, to: number, k: number, n: number) => [from + Math.floor(((to - from) * k) / n), from + Math.floor(((to - from) * (k + 1)) / n)];

/**
 * One job on the worker side. Setup is split between the workers: encode a share of the faces,
 * worker 0 sorts, gather a share of the slots, worker 0 builds the tree into the shared node
 * arrays, then each takes traversal tasks from the shared counter. Returns its partial result.
 */
function runJob(input: WorkerInput): SelfIntersectionResult {
	const t0 = performance.now();
	const { threads, faceCount, index } = input;
	const ctrl = new Int32Array(input.control);
	const mesh: MeshBuffers = {
		positions: new Float64Array(input.positions, 0, input.positionCount),
		indices: new Uint32Array(input.indices, 0, 3 * faceCount)
	};
	const vertCount = input.positionCount / 3;
	const live = new Uint8Array(input.live);
	const rawCodes = new Uint32Array(input.rawCodes);
	const fanStart = new Uint32Array(input.fanStart, 0, vertCount + 1);
	const fanFaces = new Uint32Array(input.fanFaces, 0, 3 * faceCount);
	const clear = new Uint8Array(input.clear, 0, vertCount);
	// The last worker makes the vertex fans while worker 0 sorts, and clears vertices while worker 0
	// builds the tree (with one worker, worker 0 does both).
	const fanWorker = threads - 1;
	const [f0, f1] = share(0, faceCount, index, threads);
	encodeFaces(mesh, codeFrame(mesh.positions), f0, f1, live, rawCodes);
	barrier(ctrl, 1, threads);
	if (index === 0) {
		// faceOf and verts are not written before the gather, so they serve as the sort's scratch:
		// their pages are touched once instead of fresh scratch arrays.
		const liveCount = sortLiveFacesInto(
			live,
			rawCodes,
			faceCount,
			new Uint32Array(input.sortedCodes),
			new Uint32Array(input.slotFace),
			new Uint32Array(input.faceOf, 0, faceCount),
			new Uint32Array(input.verts, 0, faceCount)
		);
		Atomics.store(ctrl, CTRL_LIVE, liveCount);
	}
	if (index === fanWorker) vertexFaces(mesh.indices, vertCount, live, fanStart, fanFaces);
	barrier(ctrl, 2, threads);
	const liveCount = Atomics.load(ctrl, CTRL_LIVE);
	const slots: SlotArrays = {
		faceOf: new Uint32Array(input.faceOf, 0, liveCount),
		verts: new Uint32Array(input.verts, 0, 3 * liveCount),
		box: new Float32Array(input.box, 0, 6 * liveCount)
	};
	const [s0, s1] = share(0, liveCount, index, threads);
	gatherSlots(mesh, new Uint32Array(input.slotFace, 0, liveCount), s0, s1, slots);
	barrier(ctrl, 3, threads);
	// One tree for all: worker 0 builds it into the shared node arrays while the others clear
	// vertices in chunks from a shared counter, which worker 0 joins once the tree is built; one
	// tree saves each worker a copy of the nodes.
	const store: BvhNodeStore = {
		firstChild: new Int32Array(input.nodeFirstChild),
		start: new Uint32Array(input.nodeStart),
		count: new Uint32Array(input.nodeCount),
		bounds: new Float32Array(input.nodeBounds)
	};
	if (index === 0) {
		const built = buildBvhSorted(new Uint32Array(input.sortedCodes, 0, liveCount), slots.box, LEAF_SIZE, store);
		Atomics.store(ctrl, CTRL_NODES, built.nodeCount);
	}
	for (let c = Atomics.add(ctrl, CTRL_CLEAR, 1); c * CLEAR_CHUNK < vertCount; c = Atomics.add(ctrl, CTRL_CLEAR, 1)) {
		clearVertices(mesh.positions, mesh.indices, fanStart, fanFaces, c * CLEAR_CHUNK, Math.min(vertCount, (c + 1) * CLEAR_CHUNK), clear);
	}
	barrier(ctrl, 4, threads);
	// Tree and clear flags are complete: the calling thread may join (help()).
	if (index === 0) Atomics.store(ctrl, CTRL_READY, 1);
	const bvh = bvhFromStore(store, Atomics.load(ctrl, CTRL_NODES));
	const prep: PreparedMesh = { faceCount, liveCount, degenerateSkipped: faceCount - liveCount, positions: mesh.positions, ...slots, bvh, clear };
	return findInPrepared(
		prep,
		{ sampleLimit: input.sampleLimit, taskTarget: input.taskTarget, shard: { nextTask: () => Atomics.add(ctrl, CTRL_TASK, 1) } },
		performance.now() - t0
	);
}

/** Worker side: runs each job message it is sent and posts its partial result. */
export function runSelfIntersectWorker(): void {
	if (isMainThread || !parentPort) throw new Error('runSelfIntersectWorker must run inside a worker thread.');
	const port = parentPort;
	port.on('message', (input: WorkerInput) => {
		try {
			port.postMessage({ job: input.job, result: runJob(input) } satisfies WorkerOutput);
		} catch (e) {
			port.postMessage({ job: input.job, error: e instanceof Error ? e.message : String(e) } satisfies WorkerOutput);
		}
	});
}

/** Shared buffers of one call, each sized for `faces` faces (nodes for bvhMaxNodes) and `coords` coordinates. */
interface SharedScratch extends SharedBuffers {
	faces: number;
	coords: number;
}

/**
 * Every buffer is fully written for the faces in use before it is read (see runJob), so old
 * contents never leak into a later call. Untouched pages of a SharedArrayBuffer cost nothing, so
 * slot arrays are sized for every face.
 */
function newScratch(faces: number, coords: number): SharedScratch {
	const nodes = bvhMaxNodes(faces);
	const sab = (bytes: number) => new SharedArrayBuffer(Math.max(8, bytes));
	return {
		faces,
		coords,
		positions: sab(8 * coords),
		indices: sab(12 * faces),
		live: sab(faces),
		rawCodes: sab(4 * faces),
		sortedCodes: sab(4 * faces),
		slotFace: sab(4 * faces),
		faceOf: sab(4 * faces),
		verts: sab(12 * faces),
		box: sab(24 * faces),
		fanStart: sab(4 * (Math.floor(coords / 3) + 1)),
		fanFaces: sab(12 * faces),
		clear: sab(Math.floor(coords / 3)),
		nodeFirstChild: sab(4 * nodes),
		nodeStart: sab(4 * nodes),
		nodeCount: sab(4 * nodes),
		nodeBounds: sab(24 * nodes)
	};
}

/** Largest mesh whose buffers a pool keeps (about 105 bytes per face of a closed mesh: 315 MB at this size); larger runs get buffers of their own. */
const KEEP_FACES_MAX = 3_000_000;

let nextJob = 1;

function spawnWorker(): Worker {
	const w = spawnModuleWorker(import.meta.url, WORKER_TAG, {});
	w.unref();
	return w;
}

/**
 * Self-intersection workers and the shared buffers of their last run, kept between runs until
 * close(). Runs started while another one holds the workers get workers of their own.
 */
export class SelfIntersectPool extends KeptWorkers<SharedScratch> {
	constructor() {
		super(spawnWorker, KEEP_FACES_MAX);
	}

	/** Starts a run on this pool's workers when free, else on workers of its own (see startSelfIntersections). */
	start(mesh: MeshBuffers, opts: ParallelSelfIntersectionOptions = {}): SelfIntersectionRun {
		try {
			return startRun(mesh, opts, this);
		} catch (e) {
			return { help: () => 0, finish: () => Promise.reject(e) };
		}
	}

	/** For startRun: this pool's workers and buffers, or null when a run holds them. */
	acquire(threads: number, faces: number, coords: number): { workers: Worker[]; scratch: SharedScratch } | null {
		const workers = this.holdWorkers(threads);
		if (!workers) return null;
		const scratch = this.keptBuffers(faces, (k) => k.faces >= faces && k.coords >= coords, () => newScratch(faces, coords));
		return { workers, scratch };
	}
}

let defaultPool: SelfIntersectPool | null = null;

/** This thread's default pool, made on first use. */
export function selfIntersectPool(): SelfIntersectPool {
	defaultPool ??= new SelfIntersectPool();
	return defaultPool;
}

/** Starts the default pool's workers up to `threads` (default os.availableParallelism()). */
export function warmSelfIntersectPool(threads?: number): void {
	selfIntersectPool().warm(Math.max(1, threads ?? availableParallelism()));
}

/** Terminates the default pool's workers; the next run starts new ones. */
export async function closeSelfIntersectPool(): Promise<void> {
	await defaultPool?.close();
}

/** Counts self-intersecting face pairs on worker threads; same result as findSelfIntersections. */
export async function findSelfIntersectionsParallel(mesh: MeshBuffers, opts: ParallelSelfIntersectionOptions = {}): Promise<SelfIntersectionResult> {
	return startSelfIntersections(mesh, opts).finish();
}

/** A running parallel count (see startSelfIntersections). */
export interface SelfIntersectionRun {
	/**
	 * Lets the calling thread take traversal tasks from the same shared counter until none are
	 * left, then returns (at once when the workers have not built the tree yet, or are done).
	 * Synchronous: call it when the thread has nothing else to do, before finish(). Returns how
	 * many tasks this thread ran.
	 */
	help(): number;
	/** The whole count: the workers' parts and the caller's, merged. */
	finish(): Promise<SelfIntersectionResult>;
}

/**
 * Starts the count on worker threads and returns at once. The caller may do other work, then
 * call help() to join the traversal, so a machine with as many busy threads as cores stays evenly
 * loaded to the end: with one worker per spare core, the caller finishing its own stages early or
 * late never leaves a core idle while tasks remain. Rejections surface from finish().
 */
export function startSelfIntersections(mesh: MeshBuffers, opts: ParallelSelfIntersectionOptions = {}): SelfIntersectionRun {
	return selfIntersectPool().start(mesh, opts);
}

function startRun(mesh: MeshBuffers, opts: ParallelSelfIntersectionOptions, pool: SelfIntersectPool): SelfIntersectionRun {
	const t0 = performance.now();
	const threads = Math.max(1, Math.floor(opts.threads ?? availableParallelism()));
	const sampleLimit = opts.sampleLimit ?? DEFAULT_SAMPLE_LIMIT;
	if (opts.signal?.aborted) throw new Error('Self-intersection check was cancelled.');
	validateMesh(mesh);
	const faceCount = mesh.indices.length / 3;
	// The pool when it is free, else workers of this call's own. Buffers that already live in a
	// SharedArrayBuffer (from offset 0) are used as they are; others are copied into shared memory.
	// A pooled run reuses the shared buffers of the pool's previous run when they are large enough:
	// pages already touched cost nothing to write again, while fresh ones are slow to fault in.
	const held = pool.acquire(threads, faceCount, mesh.positions.length);
	const pooled = held !== null;
	const scratch = held ? held.scratch : newScratch(faceCount, mesh.positions.length);
	const sharedAsIs = (a: Float64Array | Uint32Array) => a.buffer instanceof SharedArrayBuffer && a.byteOffset === 0;
	let posBuf: SharedArrayBuffer, idxBuf: SharedArrayBuffer;
	if (sharedAsIs(mesh.positions)) posBuf = mesh.positions.buffer as SharedArrayBuffer;
	else {
		posBuf = scratch.positions;
		new Float64Array(posBuf, 0, mesh.positions.length).set(mesh.positions);
	}
	if (sharedAsIs(mesh.indices)) idxBuf = mesh.indices.buffer as SharedArrayBuffer;
	else {
		idxBuf = scratch.indices;
		new Uint32Array(idxBuf, 0, mesh.indices.length).set(mesh.indices);
	}
	const { faces: _f, coords: _c, ...buffers } = scratch;
	const data: WorkerInput = {
		kind: 'shellgate-self-intersect',
		job: nextJob++,
		index: 0,
		threads,
		faceCount,
		...buffers,
		positions: posBuf,
		positionCount: mesh.positions.length,
		indices: idxBuf,
		control: new SharedArrayBuffer(4 * 16),
		sampleLimit,
		taskTarget: Math.max(DEFAULT_TASK_TARGET, 64 * threads)
	};
	const workers: Worker[] = held ? held.workers : Array.from({ length: threads }, () => spawnWorker());
	const cleanups: (() => void)[] = [];
	let stopped = false;
	const stopAll = () => {
		stopped = true;
		for (const w of workers) void w.terminate();
	};
	const onAbort = () => stopAll();
	opts.signal?.addEventListener('abort', onAbort, { once: true });
	let settled = false;
	const workerParts = Promise.all(
		workers.map((w, index) => {
			w.ref();
			return new Promise<SelfIntersectionResult>((resolve, reject) => {
				const onMessage = (msg: WorkerOutput) => {
					if (msg.job !== data.job) return;
					if (msg.result) resolve(msg.result);
					else reject(new Error(msg.error ?? 'Self-intersection worker failed.'));
				};
				const onExit = (code: number) => {
					if (opts.signal?.aborted) reject(new Error('Self-intersection check was cancelled.'));
					else reject(new Error(`Self-intersection worker stopped early (exit code ${code}).`));
				};
				w.on('message', onMessage);
				w.on('error', reject);
				w.on('exit', onExit);
				cleanups.push(() => {
					w.off('message', onMessage);
					w.off('error', reject);
					w.off('exit', onExit);
					w.unref();
				});
				w.postMessage({ ...data, index } satisfies WorkerInput);
			});
		})
	)
		.catch((e: unknown) => {
			// A failed worker may leave the others waiting at a barrier forever: stop them all.
			stopAll();
			throw e;
		})
		.finally(() => {
			// Runs on this thread's event loop, so never while help() is reading the shared buffers.
			settled = true;
			opts.signal?.removeEventListener('abort', onAbort);
			for (const c of cleanups) c();
			if (!pooled) for (const w of workers) void w.terminate();
			else pool.release(stopped ? workers : []);
		});
	// Handled here so a failure is never reported as unhandled before finish() is awaited.
	workerParts.catch(() => {});
	const helperParts: SelfIntersectionResult[] = [];

	const help = (): number => {
		if (settled || opts.signal?.aborted) return 0;
		const ctrl = new Int32Array(data.control);
		// Set once the tree and the clear flags are complete (runJob); 0 means setup is still running.
		if (Atomics.load(ctrl, CTRL_READY) === 0) return 0;
		const nodeCount = Atomics.load(ctrl, CTRL_NODES);
		const liveCount = Atomics.load(ctrl, CTRL_LIVE);
		const store: BvhNodeStore = {
			firstChild: new Int32Array(data.nodeFirstChild),
			start: new Uint32Array(data.nodeStart),
			count: new Uint32Array(data.nodeCount),
			bounds: new Float32Array(data.nodeBounds)
		};
		const prep: PreparedMesh = {
			faceCount,
			liveCount,
			degenerateSkipped: faceCount - liveCount,
			positions: new Float64Array(data.positions, 0, data.positionCount),
			faceOf: new Uint32Array(data.faceOf, 0, liveCount),
			verts: new Uint32Array(data.verts, 0, 3 * liveCount),
			box: new Float32Array(data.box, 0, 6 * liveCount),
			bvh: bvhFromStore(store, nodeCount),
			clear: new Uint8Array(data.clear, 0, data.positionCount / 3)
		};
		const part = findInPrepared(prep, { sampleLimit, taskTarget: data.taskTarget, shard: { nextTask: () => Atomics.add(ctrl, CTRL_TASK, 1) } });
		helperParts.push(part);
		return part.stats?.tasks ?? 0;
	};

	const finish = async (): Promise<SelfIntersectionResult> => {
		const parts = [...(await workerParts), ...helperParts];
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
				clearSkips: parts.reduce((s, p) => s + (p.stats?.clearSkips ?? 0), 0),
				exactTests: parts.reduce((s, p) => s + (p.stats?.exactTests ?? 0), 0),
				tasks: parts.reduce((s, p) => s + (p.stats?.tasks ?? 0), 0)
			}
		};
	};
	return { help, finish };
}

if (isWorkerFor(WORKER_TAG)) runSelfIntersectWorker();
