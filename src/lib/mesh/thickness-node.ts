/**
 * Wall thickness and gap (thickness.ts faceDistancesBoth) on Node worker_threads.
 *
 * Loading follows self-intersect-node.ts: module-worker-node.ts starts a thread that imports this
 * module by its own URL, and the check at the bottom runs the worker side there.
 *
 * Work split: this thread builds the ray BVH, copies it once into SharedArrayBuffers (about 100
 * bytes per face), and the workers plus this thread take chunks of BVH slots from one Atomics
 * counter. Slots map to distinct faces, so every thread writes disjoint entries of the shared
 * output arrays and the result equals the single-thread one exactly. A failing worker rejects
 * the promise and all workers are terminated. Workers are started per call (no pool yet: the
 * integrator may keep them beside the self-intersection pool when this joins the report).
 */
import { availableParallelism } from 'node:os';
import { workerData, parentPort, type Worker } from 'node:worker_threads';
import { isWorkerFor, spawnModuleWorker } from './module-worker-node';
import { buildRayBvh, distancesBothRange, type DistanceArrays, type FaceDistanceOptions, type FaceDistances, type RayBvh } from './thickness';
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
	out: { th: [SharedArrayBuffer, SharedArrayBuffer, SharedArrayBuffer]; gp: [SharedArrayBuffer, SharedArrayBuffer, SharedArrayBuffer] };
	counter: SharedArrayBuffer;
}

function share<T extends Float32Array | Float64Array | Int32Array | Uint32Array>(a: T): SharedArrayBuffer {
	const sab = new SharedArrayBuffer(a.byteLength);
	new Uint8Array(sab).set(new Uint8Array(a.buffer, a.byteOffset, a.byteLength));
	return sab;
}

function outArrays(n: number): { bufs: [SharedArrayBuffer, SharedArrayBuffer, SharedArrayBuffer]; arrays: DistanceArrays } {
	const bufs: [SharedArrayBuffer, SharedArrayBuffer, SharedArrayBuffer] = [new SharedArrayBuffer(4 * n), new SharedArrayBuffer(4 * n), new SharedArrayBuffer(24 * n)];
	const arrays = { value: new Float32Array(bufs[0]).fill(Infinity), hitFace: new Int32Array(bufs[1]).fill(-1), from: new Float64Array(bufs[2]).fill(NaN) };
	return { bufs, arrays };
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
	const view = (b: [SharedArrayBuffer, SharedArrayBuffer, SharedArrayBuffer]): DistanceArrays => ({ value: new Float32Array(b[0]), hitFace: new Int32Array(b[1]), from: new Float64Array(b[2]) });
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
}

/**
 * faceDistancesBoth on `threads` threads (this one and threads − 1 workers). Same values, same
 * hit faces. `ms` of each result is the wall time of the whole call, build and workers included.
 */
export async function faceDistancesBothParallel(mesh: MeshBuffers, opts: ParallelDistanceOptions): Promise<{ thickness: FaceDistances; gap: FaceDistances; buildMs: number }> {
	const t0 = performance.now();
	const n = (mesh.indices.length / 3) | 0;
	const rb = opts.rayBvh ?? buildRayBvh(mesh);
	const buildMs = performance.now() - t0;
	const th = outArrays(n), gp = outArrays(n);
	const job: SharedJob = {
		n,
		nodeCount: rb.bvh.nodeCount,
		tMin: rb.tMin,
		cellSize: opts.cellSize,
		tMax: opts.maxDistance ?? Infinity,
		bounds: share(rb.bvh.bounds),
		firstChild: share(rb.bvh.firstChild),
		start: share(rb.bvh.start),
		count: share(rb.bvh.count),
		faceOf: share(rb.faceOf),
		verts: share(rb.verts),
		vids: share(rb.vids),
		normals: share(rb.normals),
		out: { th: th.bufs, gp: gp.bufs },
		counter: new SharedArrayBuffer(4)
	};
	const workerCount = Math.max(0, Math.min((opts.threads ?? availableParallelism()) - 1, Math.ceil(n / CHUNK) - 1));
	const workers: Worker[] = [];
	const done: Promise<number>[] = [];
	for (let k = 0; k < workerCount; k++) {
		const w = spawnModuleWorker(new URL(import.meta.url).href, WORKER_TAG, { job });
		workers.push(w);
		done.push(
			new Promise<number>((resolve, reject) => {
				w.once('message', (m: { rays?: number; error?: string }) => (m.error ? reject(new Error(m.error)) : resolve(m.rays ?? 0)));
				w.once('error', reject);
				w.once('exit', (code) => code !== 0 && reject(new Error(`thickness worker exited with ${code}`)));
			})
		);
	}
	try {
		// This thread works too; workers still starting find fewer chunks left, never a wrong one.
		let rays = drain(job, viewJob(job));
		rays += (await Promise.all(done)).reduce((a, b) => a + b, 0);
		const ms = performance.now() - t0;
		const result = (a: DistanceArrays): FaceDistances => ({ ...a, rays, ms });
		return { thickness: result(th.arrays), gap: result(gp.arrays), buildMs };
	} finally {
		for (const w of workers) void w.terminate();
	}
}

function runThicknessWorker(): void {
	const job = (workerData as { job: SharedJob }).job;
	try {
		const rays = drain(job, viewJob(job));
		parentPort!.postMessage({ rays });
	} catch (e) {
		parentPort!.postMessage({ error: e instanceof Error ? e.message : String(e) });
	}
}

if (isWorkerFor(WORKER_TAG)) runThicknessWorker();
