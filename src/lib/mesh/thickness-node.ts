/**
 * Wall thickness and gap (thickness.ts faceDistancesBoth) on Node worker_threads.
 *
 * Loading follows self-intersect-node.ts: module-worker-node.ts starts a thread that imports this
 * module by its own URL, and the check at the bottom runs the worker side there.
 *
 * Work split: this thread builds the ray BVH, copies it once into SharedArrayBuffers (about 100
 * bytes per face), and the workers plus this thread take chunks of BVH slots from one Atomics
 * counter. Slots map to distinct faces, so every thread writes disjoint entries of the shared
 * output arrays and the result equals the single-thread one exactly (the output is copied out of
 * shared memory at the end). With no worker to share with, nothing is copied. A failing worker
 * rejects the promise and is terminated.
 *
 * Worker pool: starting a worker costs module loading and compiling in the new thread, so workers
 * live in a ThicknessPool (warm, acquire, release, close), as the self-intersection workers do in
 * theirs; each thread has one default pool (`thicknessPool()`), and a kept engine thread warms it
 * at start. Workers take one job message at a time; idle ones are unref'd, so a pool never keeps
 * a process alive. A call that finds the pool busy gets workers of its own, terminated after. The
 * pool also keeps the shared buffers of its largest call (up to KEEP_FACES_MAX faces): shared
 * memory handed to a worker lives until that worker's next garbage collection, and an idle worker
 * may never have one, so fresh buffers each call grew a kept engine thread by about 20 MB per
 * 90 k-face check.
 */
import { availableParallelism } from 'node:os';
import { parentPort, type Worker } from 'node:worker_threads';
import { KeptWorkers } from './kept-workers';
import { isWorkerFor, spawnModuleWorker } from './module-worker-node';
import { buildRayBvh, distancesBothRange, faceDistancesBoth, type DistanceArrays, type FaceDistanceOptions, type FaceDistances, type RayBvh } from './thickness';
import type { MeshBuffers } from './types';

const WORKER_TAG = 'shellgate-thickness';
/** Slots per chunk: small enough to balance two threads, large enough that the counter is cold. */
const CHUNK = 8192;

interface SharedJob {
	n: number;
	nodeCount: number;
	tMin: number;
	cellSize: number;
	tMax: number;
	bounds: SharedArrayBuffer;
	firstChild: SharedArrayBuffer;
	start: SharedArrayBuffer;
	count: SharedArrayBuffer;
	faceOf: SharedArrayBuffer;
	verts: SharedArrayBuffer;
	vids: SharedArrayBuffer;
	normals: SharedArrayBuffer;
	out: { th: OutBuffers; gp: OutBuffers };
	counter: SharedArrayBuffer;
}

type OutBuffers = [SharedArrayBuffer, SharedArrayBuffer, SharedArrayBuffer];

/** Shared buffers of one call, sized for `faces` faces and `nodes` tree nodes (or more). */
interface ThicknessBuffers {
	faces: number;
	nodes: number;
	bounds: SharedArrayBuffer;
	firstChild: SharedArrayBuffer;
	start: SharedArrayBuffer;
	count: SharedArrayBuffer;
	faceOf: SharedArrayBuffer;
	verts: SharedArrayBuffer;
	vids: SharedArrayBuffer;
	normals: SharedArrayBuffer;
	th: OutBuffers;
	gp: OutBuffers;
}

function newBuffers(faces: number, nodes: number): ThicknessBuffers {
	const sab = (bytes: number) => new SharedArrayBuffer(Math.max(8, bytes));
	const out = (): OutBuffers => [sab(4 * faces), sab(4 * faces), sab(24 * faces)];
	return {
		faces,
		nodes,
		bounds: sab(24 * nodes),
		firstChild: sab(4 * nodes),
		start: sab(4 * nodes),
		count: sab(4 * nodes),
		faceOf: sab(4 * faces),
		verts: sab(72 * faces),
		vids: sab(12 * faces),
		normals: sab(12 * faces),
		th: out(),
		gp: out()
	};
}

/**
 * Largest mesh whose buffers a pool keeps (about 180 bytes a face: 540 MB at this size), as the
 * self-intersection pool does; a kept engine thread that ran a file this large is retired when
 * idle (engine-pool.ts retireBytes). Workers that were handed fresh buffers for a larger mesh are
 * ended after the call, since an idle worker may never collect them (checks of 1 M faces in a row
 * grew a kept engine thread by 180 MB each with a 600,000-face cap).
 */
const KEEP_FACES_MAX = 3_000_000;

function copyInto<T extends Float32Array | Float64Array | Int32Array | Uint32Array>(to: SharedArrayBuffer, a: T): SharedArrayBuffer {
	new Uint8Array(to, 0, a.byteLength).set(new Uint8Array(a.buffer, a.byteOffset, a.byteLength));
	return to;
}

/** The first n entries set to "no hit" (Infinity, −1, NaN), as drain expects. */
function clearOut(b: OutBuffers, n: number): OutBuffers {
	new Float32Array(b[0], 0, n).fill(Infinity);
	new Int32Array(b[1], 0, n).fill(-1);
	new Float64Array(b[2], 0, 3 * n).fill(NaN);
	return b;
}

function viewJob(job: SharedJob): { rb: RayBvh; th: DistanceArrays; gp: DistanceArrays; counter: Int32Array } {
	const rb: RayBvh = {
		bvh: {
			nodeCount: job.nodeCount,
			bounds: new Float32Array(job.bounds),
			firstChild: new Int32Array(job.firstChild),
			start: new Uint32Array(job.start),
			count: new Uint32Array(job.count),
			order: new Uint32Array(0)
		},
		faceOf: new Uint32Array(job.faceOf),
		verts: new Float64Array(job.verts),
		vids: new Uint32Array(job.vids),
		normals: new Float32Array(job.normals),
		tMin: job.tMin
	};
	const view = (b: OutBuffers): DistanceArrays => ({ value: new Float32Array(b[0]), hitFace: new Int32Array(b[1]), from: new Float64Array(b[2]) });
	return { rb, th: view(job.out.th), gp: view(job.out.gp), counter: new Int32Array(job.counter) };
}

/** Takes chunks until none are left; returns the line queries cast. */
function drain(job: SharedJob, v: ReturnType<typeof viewJob>): number {
	let rays = 0;
	for (;;) {
		const s0 = Atomics.add(v.counter, 0, CHUNK);
		if (s0 >= job.n) return rays;
		rays += distancesBothRange(v.rb, s0, Math.min(job.n, s0 + CHUNK), job.cellSize, job.tMax, v.th, v.gp);
	}
}

export interface ParallelDistanceOptions extends FaceDistanceOptions {
	/** Threads in all, this one included; default os.availableParallelism(). 1 runs here only. */
	threads?: number;
	/** Where the workers come from; default this thread's thicknessPool(). */
	pool?: ThicknessPool;
}

/** Wall and gap of every face, with the ray structure's build time. */
export interface ParallelDistances {
	thickness: FaceDistances;
	gap: FaceDistances;
	buildMs: number;
}

/** A wall-and-gap measure under way on workers (startFaceDistancesParallel). */
export interface DistanceRun {
	/** Workers casting rays for it (0: finish() does all the work on this thread, nothing has started). */
	readonly workers: number;
	/**
	 * Takes the chunks no worker has taken yet on this thread, then waits for the workers' last
	 * ones; resolves with the result, or rejects when a worker failed. Call it once.
	 */
	finish(): Promise<ParallelDistances>;
}

/**
 * faceDistancesBoth on `threads` threads (this one and threads − 1 workers). Same values, same
 * hit faces. `ms` of each result is the wall time of the whole call, build and workers included.
 */
export async function faceDistancesBothParallel(mesh: MeshBuffers, opts: ParallelDistanceOptions): Promise<ParallelDistances> {
	return startFaceDistancesParallel(mesh, opts).finish();
}

/**
 * Starts faceDistancesBothParallel's workers and returns at once, so this thread can do other
 * work while they cast rays; finish() has this thread take whatever chunks are left. With no
 * worker (one thread, or a mesh of one chunk) all the work is done in finish(). `keptOnly`: use
 * the pool's workers only when it has `threads − 1` started and idle, else none (no cold start).
 */
export function startFaceDistancesParallel(mesh: MeshBuffers, opts: ParallelDistanceOptions & { keptOnly?: boolean }): DistanceRun {
	const t0 = performance.now();
	const n = (mesh.indices.length / 3) | 0;
	const pool = opts.pool ?? thicknessPool();
	let workerCount = Math.max(0, Math.min((opts.threads ?? availableParallelism()) - 1, Math.ceil(n / CHUNK) - 1));
	if (opts.keptOnly && pool.idleStarted < workerCount) workerCount = 0;
	const tMax = opts.maxDistance ?? Infinity;
	if (workerCount === 0) {
		return {
			workers: 0,
			async finish() {
				// This thread alone: the structure as it is, nothing copied into shared memory.
				const t1 = performance.now();
				const rb = opts.rayBvh ?? buildRayBvh(mesh);
				const buildMs = performance.now() - t1;
				const r = faceDistancesBoth(mesh, { cellSize: opts.cellSize, maxDistance: tMax, rayBvh: rb });
				const ms = performance.now() - t0;
				return { thickness: { ...r.thickness, ms }, gap: { ...r.gap, ms }, buildMs };
			}
		};
	}
	const rb = opts.rayBvh ?? buildRayBvh(mesh);
	const buildMs = performance.now() - t0;
	const held = pool.acquire(workerCount);
	const workers: Worker[] = held ?? Array.from({ length: workerCount }, () => spawnWorker());
	// The pool's kept buffers when its workers run this call: fresh shared memory each call would
	// stay alive until an idle worker's next garbage collection, which may never come.
	const bufs = held ? pool.buffers(n, rb.bvh.nodeCount) : newBuffers(n, rb.bvh.nodeCount);
	const job: SharedJob = {
		n,
		nodeCount: rb.bvh.nodeCount,
		tMin: rb.tMin,
		cellSize: opts.cellSize,
		tMax,
		bounds: copyInto(bufs.bounds, rb.bvh.bounds),
		firstChild: copyInto(bufs.firstChild, rb.bvh.firstChild),
		start: copyInto(bufs.start, rb.bvh.start),
		count: copyInto(bufs.count, rb.bvh.count),
		faceOf: copyInto(bufs.faceOf, rb.faceOf),
		verts: copyInto(bufs.verts, rb.verts),
		vids: copyInto(bufs.vids, rb.vids),
		normals: copyInto(bufs.normals, rb.normals),
		out: { th: clearOut(bufs.th, n), gp: clearOut(bufs.gp, n) },
		counter: new SharedArrayBuffer(4)
	};
	const id = nextJob++;
	const failed = new Set<Worker>();
	const cleanups: (() => void)[] = [];
	const done = workers.map(
		(w) =>
			new Promise<number>((resolve, reject) => {
				const fail = (e: Error) => {
					failed.add(w);
					reject(e);
				};
				const onMessage = (m: WorkerOutput) => {
					if (m.id !== id) return;
					if (m.error !== undefined) fail(new Error(m.error));
					else resolve(m.rays ?? 0);
				};
				const onExit = (code: number) => fail(new Error(`thickness worker exited with ${code}`));
				w.on('message', onMessage);
				w.on('error', fail);
				w.on('exit', onExit);
				cleanups.push(() => {
					w.off('message', onMessage);
					w.off('error', fail);
					w.off('exit', onExit);
					w.unref();
				});
				w.ref();
				w.postMessage({ id, job } satisfies WorkerInput);
			})
	);
	// Handled here so a worker failing while this thread is busy elsewhere is never reported as unhandled.
	const all = Promise.all(done);
	all.catch(() => {});
	return {
		workers: workerCount,
		async finish() {
			try {
				// This thread works too; workers still starting find fewer chunks left, never a wrong one.
				let rays = drain(job, viewJob(job));
				rays += (await all).reduce((a, b) => a + b, 0);
				// Copied out: the kept buffers serve the pool's next call.
				const result = (b: OutBuffers): FaceDistances => ({
					value: new Float32Array(b[0], 0, n).slice(),
					hitFace: new Int32Array(b[1], 0, n).slice(),
					from: new Float64Array(b[2], 0, 3 * n).slice(),
					rays,
					ms: performance.now() - t0
				});
				const thickness = result(bufs.th), gap = result(bufs.gp);
				return { thickness, gap, buildMs };
			} catch (e) {
				// A failed worker may still be draining: stop them all (a pooled one leaves the pool).
				for (const w of workers) failed.add(w);
				throw e;
			} finally {
				for (const c of cleanups) c();
				// Fresh shared memory lives as long as a worker that saw it: those workers go.
				if (n > KEEP_FACES_MAX) for (const w of workers) failed.add(w);
				for (const w of failed) void w.terminate();
				if (held) pool.release([...failed]);
				else for (const w of workers) void w.terminate();
			}
		}
	};
}

interface WorkerInput {
	/** Call id, echoed back so an answer is never taken for another call's. */
	id: number;
	job: SharedJob;
}

interface WorkerOutput {
	id: number;
	rays?: number;
	error?: string;
}

let nextJob = 1;

function spawnWorker(): Worker {
	const w = spawnModuleWorker(new URL(import.meta.url).href, WORKER_TAG, {});
	w.unref();
	return w;
}

/** Wall-and-gap workers kept between calls until close(); a call that finds them busy gets workers of its own. */
export class ThicknessPool extends KeptWorkers<ThicknessBuffers> {
	constructor() {
		super(spawnWorker, KEEP_FACES_MAX);
	}

	/** `count` workers of this pool for one call, started as needed; null while another call holds them. */
	acquire(count: number): Worker[] | null {
		return this.holdWorkers(count);
	}

	/** Shared buffers for a call holding this pool's workers: the kept ones, grown when too small. */
	buffers(faces: number, nodes: number): ThicknessBuffers {
		return this.keptBuffers(faces, (k) => k.faces >= faces && k.nodes >= nodes, () => newBuffers(faces, nodes));
	}
}

let defaultPool: ThicknessPool | null = null;

/** This thread's default pool, made on first use. */
export function thicknessPool(): ThicknessPool {
	defaultPool ??= new ThicknessPool();
	return defaultPool;
}

/** Worker side: runs each job message it is sent and posts the line queries it cast. */
function runThicknessWorker(): void {
	const port = parentPort!;
	port.on('message', ({ id, job }: WorkerInput) => {
		try {
			port.postMessage({ id, rays: drain(job, viewJob(job)) } satisfies WorkerOutput);
		} catch (e) {
			port.postMessage({ id, error: e instanceof Error ? e.message : String(e) } satisfies WorkerOutput);
		}
	});
}

if (isWorkerFor(WORKER_TAG)) runThicknessWorker();
