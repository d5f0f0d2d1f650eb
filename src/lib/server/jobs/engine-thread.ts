// The engine, run off the main thread: checks, repairs and format conversions. Bytes in, a report,
// a repaired file or a converted file out, with progress. Imports only src/lib/mesh, so a worker
// thread loads no server or database code.
import { isMainThread, parentPort, workerData } from 'node:worker_threads';
import { defaultSelfIntersectThreads, inspectFileNode, SELF_INTERSECT_WORKER_MIN_FACES } from '../../mesh/inspect-node';
import { thicknessPool } from '../../mesh/thickness-node';
import { warmSelfIntersectPool } from '../../mesh/self-intersect-node';
import { isWorkerFor, lowerThisThreadPriority } from '../../mesh/module-worker-node';
import { readMesh } from '../../mesh/read';
import { applyRecipe, areaAndVolume, meshDeviation, recipeScaleFactor, RepairError, sameMesh, skippedItems, type ChangeMeasures, type RepairLogEntry, type RepairStep } from '../../mesh/repair';

import type { InspectOptions, IterationDistance } from '../../mesh/report';
import { DEFAULT_DISTANCE_SAMPLES, shapeDistance } from '../../mesh/shape-distance';
import { MeshReadError } from '../../mesh/types';
import { writeBinaryStl, writeObj, writePly } from '../../mesh/write';
import { edgesToObj, sharpEdges } from '../../mesh/thickness';

/** This module's own URL: the TypeScript source under tsx/vitest, its bundled chunk after `vite build`. */
export const ENGINE_THREAD_URL = import.meta.url;
export const ENGINE_THREAD_TAG = 'shellgate-engine';

export type EngineTask =
	| {
			task: 'check';
			bytes: Uint8Array;
			fileName: string;
			options: InspectOptions;
			threads: number;
			previous?: PreviousIteration;
			/** Faces from which worker threads are used (inspect-node.ts); default ENGINE_WORKER_MIN_FACES. */
			workerMinFaces?: number;
			/** Below that, the wall-and-gap rays on a kept worker beside the report (inspect-node.ts wallsAlongside); default true. */
			wallsAlongside?: boolean;
	  }
	| { task: 'repair'; bytes: Uint8Array; fileName: string; steps: RepairStep[]; maxFaces: number }
	| { task: 'export'; bytes: Uint8Array; fileName: string; format: ExportFormat; maxFaces: number };

/** The previous iteration of a run, whose surface a check measures its shape distance from. */
export interface PreviousIteration {
	revisionId: number;
	iteration: number | null;
	bytes: Uint8Array;
	fileName: string;
}

/** Mesh formats, plus the sharp feature edges as OBJ line elements (`l`) for a mesher to snap to. */
export type ExportFormat = 'stl' | 'ply' | 'obj' | 'feature-edges';

export interface RepairOutput {
	bytes: Uint8Array;
	log: RepairLogEntry[];
	/** Parent surface versus repaired surface, model units. */
	deviation: { hausdorff: number; mean: number; parentToRepaired: number; repairedToParent: number | null };
	facesBefore: number;
	facesAfter: number;
	/** Area, volume, faces and deviation before and after, for the repair limits. */
	measures: ChangeMeasures;
	/** Items the steps left alone, each with why (e.g. a hole above the size limit). */
	skipped: string[];
	/** True when the result is the same mesh as the original: no revision is made. */
	unchanged: boolean;
}

export type EngineMessage =
	| { type: 'progress'; stage: string; percent: number }
	| { type: 'done'; result: unknown }
	| { type: 'refused'; message: string }
	| { type: 'error'; message: string };

function write(mesh: Parameters<typeof writeBinaryStl>[0], format: ExportFormat): Uint8Array {
	if (format === 'feature-edges') {
		const sharp = sharpEdges(mesh);
		return new TextEncoder().encode(edgesToObj(mesh.positions, sharp.verts, `sharp feature edges, faces meeting at more than ${sharp.angleDeg} degrees`));
	}
	return format === 'stl' ? writeBinaryStl(mesh) : format === 'ply' ? writePly(mesh, 'binary-le') : writeObj(mesh);
}

/** Shape distance from the previous iteration; a file that cannot be read gives a reason, not a failed check. */
function iterationDistance(bytes: Uint8Array, fileName: string, prev: PreviousIteration, maxFaces: number | undefined): IterationDistance {
	const t0 = performance.now();
	const base = { previousRevisionId: prev.revisionId, previousIteration: prev.iteration, samples: DEFAULT_DISTANCE_SAMPLES };
	try {
		const d = shapeDistance(readMesh(bytes, fileName, { maxFaces }), readMesh(prev.bytes, prev.fileName, { maxFaces }), { samples: DEFAULT_DISTANCE_SAMPLES });
		return { ...base, hausdorff: d.hausdorff, chamfer: d.chamfer, error: null, ms: performance.now() - t0 };
	} catch (e) {
		return { ...base, hausdorff: null, chamfer: null, error: (e instanceof Error ? e.message : String(e)).slice(0, 200), ms: performance.now() - t0 };
	}
}

async function run(input: EngineTask, post: (m: EngineMessage) => void): Promise<unknown> {
	if (input.task === 'check') {
		// Small meshes stay on this thread (inspect-node.ts: SELF_INTERSECT_WORKER_MIN_FACES).
		const report = await inspectFileNode(input.bytes, input.fileName, {
			...input.options,
			threads: input.threads,
			workerMinFaces: input.workerMinFaces ?? ENGINE_WORKER_MIN_FACES,
			// The warm-up leaves a wall-and-gap worker started: below the worker switch the rays run
			// on it while this thread builds the report (inspect-node.ts).
			wallsAlongside: input.wallsAlongside ?? true,
			onProgress: (stage, percent) => post({ type: 'progress', stage, percent: Math.min(94, 5 + percent * 0.9) })
		});
		if (input.previous) {
			post({ type: 'progress', stage: 'distance to the previous iteration', percent: 95 });
			report.iterationDistance = iterationDistance(input.bytes, input.fileName, input.previous, input.options.maxFaces);
		}
		return report;
	}
	post({ type: 'progress', stage: 'reading', percent: 5 });
	const parent = readMesh(input.bytes, input.fileName, { maxFaces: input.maxFaces });
	if (input.task === 'export') return write(parent, input.format);
	post({ type: 'progress', stage: 'repairing', percent: 20 });
	const { mesh, log } = applyRecipe(parent, input.steps);
	if (mesh.indices.length === 0) throw new RepairError('the recipe removed every face; nothing is left to check');
	post({ type: 'progress', stage: 'measuring deviation', percent: 70 });
	const skipped = skippedItems(log);
	if (sameMesh(parent, mesh)) {
		const m0 = areaAndVolume(parent);
		const f = parent.indices.length / 3;
		const measures: ChangeMeasures = { facesBefore: f, facesAfter: f, areaBefore: m0.area, areaAfter: m0.area, volumeBefore: m0.volume, volumeAfter: m0.volume, deviation: 0 };
		return { bytes: new Uint8Array(0), log, deviation: { hausdorff: 0, mean: 0, parentToRepaired: 0, repairedToParent: 0 }, facesBefore: f, facesAfter: f, measures, skipped, unchanged: true } satisfies RepairOutput;
	}
	// With a rescale in the recipe, the deviation is measured after undoing it (result ÷ F against the original).
	const scaleFactor = recipeScaleFactor(input.steps);
	let measured = mesh;
	if (scaleFactor !== 1) {
		const pos = mesh.positions.slice();
		for (let i = 0; i < pos.length; i++) pos[i] /= scaleFactor;
		measured = { positions: pos, indices: mesh.indices };
	}
	const dev = meshDeviation(parent, measured, { symmetric: true });
	const before = areaAndVolume(parent), after = areaAndVolume(mesh);
	post({ type: 'progress', stage: 'writing', percent: 90 });
	const out: RepairOutput = {
		bytes: writeBinaryStl(mesh, 'binary STL repaired by Shellgate'),
		log,
		deviation: { hausdorff: dev.hausdorff, mean: dev.mean, parentToRepaired: dev.aToB.max, repairedToParent: dev.bToA?.max ?? null },
		facesBefore: parent.indices.length / 3,
		facesAfter: mesh.indices.length / 3,
		measures: {
			facesBefore: parent.indices.length / 3,
			facesAfter: mesh.indices.length / 3,
			areaBefore: before.area,
			areaAfter: after.area,
			volumeBefore: before.volume,
			volumeAfter: after.volume,
			deviation: dev.hausdorff,
			scaleFactor
		},
		skipped,
		unchanged: false
	};
	return out;
}

/** What the pool sends a long-lived engine thread: one task at a time, tagged with its id. */
export interface EngineRequest {
	id: number;
	/**
	 * `warm`: small checks of a made-up mesh through every stage a real check runs, on this thread
	 * and on `threads` worker threads, so the first real check runs compiled code.
	 */
	input: EngineTask | { task: 'warm'; threads?: number };
}

/**
 * Faces from which a check in a kept engine thread uses worker threads (self-intersections, walls
 * and gaps). Its workers are started and compiled by the warm-up, so a check pays only for handing
 * the mesh over; even so, on the 2-core machine measured (shared with other jobs) forcing them
 * (the bench's check-warm case with BENCH_WORKER_MIN_FACES=0 against one thread) cost 15-50 % more
 * CPU at 35 k, 90 k and 200 k faces, with wall times from 16 % faster to 20 % slower between runs
 * at 90 k and 6 % faster at 200 k, so the switch stays where the command line has it (README,
 * "The server's check").
 */
export const ENGINE_WORKER_MIN_FACES = SELF_INTERSECT_WORKER_MIN_FACES;

/**
 * A hollow ball as binary STL, the warm-up check's input: two latitude-longitude spheres of
 * radius 1 and 0.95, the inner one facing inwards, 2 × rings × segs faces in all (96 × 128: about
 * 49,000 faces, edges about 0.05).
 */
function warmUpMesh(rings: number, segs: number): Uint8Array {
	const positions: number[] = [];
	const indices: number[] = [];
	for (const [r, inward] of [[1, false], [0.95, true]] as const) {
		const base = positions.length / 3;
		positions.push(0, 0, r);
		for (let i = 1; i < rings; i++) {
			const th = (Math.PI * i) / rings;
			for (let j = 0; j < segs; j++) {
				const ph = (2 * Math.PI * j) / segs;
				positions.push(r * Math.sin(th) * Math.cos(ph), r * Math.sin(th) * Math.sin(ph), r * Math.cos(th));
			}
		}
		positions.push(0, 0, -r);
		const south = positions.length / 3 - 1;
		const at = (i: number, j: number) => base + 1 + (i - 1) * segs + (j % segs);
		const tri = (a: number, b: number, c: number) => (inward ? indices.push(a, c, b) : indices.push(a, b, c));
		for (let j = 0; j < segs; j++) tri(base, at(1, j), at(1, j + 1));
		for (let i = 1; i < rings - 1; i++) {
			for (let j = 0; j < segs; j++) {
				tri(at(i, j), at(i + 1, j), at(i + 1, j + 1));
				tri(at(i, j), at(i + 1, j + 1), at(i, j + 1));
			}
		}
		for (let j = 0; j < segs; j++) tri(south, at(rings - 1, j + 1), at(rings - 1, j));
	}
	return writeBinaryStl({ positions: Float64Array.from(positions), indices: Uint32Array.from(indices) });
}

/**
 * Options that switch on every stage check.ts asks for: a cell size under the edge length (four
 * rays a face) whose range reaches the 0.05 wall (so rays hit and walls are flagged), short edges
 * counted, a flow direction off the axes (a fourth projection), and a previous iteration.
 */
const WARM_UP_OPTIONS: InspectOptions = { cellSize: 0.03, thinCells: 2, minEdgeLength: 0.04, flowDirection: [1, 0.25, 0], units: 'm', fileName: 'warm-up.stl' };

/** Runs the warm-up checks until `stop()` says a real task waits; their times. */
async function warmUp(threads: number, stop: () => boolean): Promise<{ ms: number[] }> {
	const small = warmUpMesh(96, 128);
	const ms: number[] = [];
	// On this thread alone, as checks under ENGINE_WORKER_MIN_FACES run, then with the workers larger
	// ones use (self-intersections, walls and gaps), each twice: the second run finds most loops
	// compiled by the optimising compiler. The last check is of about 100,000 faces, so an everyday
	// upload finds the memory it needs touched already (fresh pages cost 12-16 µs each here).
	const rounds: { t: number; big: boolean }[] =
		threads > 0
			? [{ t: 0, big: false }, { t: 0, big: false }, { t: threads, big: false }, { t: threads, big: true }]
			: [{ t: 0, big: false }, { t: 0, big: true }];
	for (const { t, big } of rounds) {
		if (stop()) break;
		const bytes = big ? warmUpMesh(128, 200) : small;
		const t0 = performance.now();
		const task: EngineTask = {
			task: 'check',
			bytes: bytes.slice(),
			fileName: 'warm-up.stl',
			options: WARM_UP_OPTIONS,
			threads: t,
			workerMinFaces: 0,
			previous: { revisionId: 0, iteration: null, bytes, fileName: 'warm-up.stl' }
		};
		await run(task, () => {});
		ms.push(Math.round(performance.now() - t0));
	}
	// Started and kept whether or not the rounds above used them; idle, they never keep the process alive.
	if (threads > 0) {
		warmSelfIntersectPool(threads);
		thicknessPool().warm(Math.max(0, threads - 1));
	}
	return { ms };
}

/** Thread start-up data (workerData). */
export interface EngineThreadData {
	/** Added to the thread's nice value on Linux, so checks yield the CPU to the web process. */
	niceness: number;
}

/**
 * Worker side: the thread lives across tasks (so module loading, JIT warm-up and the
 * self-intersection workers it keeps are paid once, not per check) and runs the tasks it is sent
 * one after another. The pool terminates it on a timeout or cancellation and starts a fresh one.
 */
export function runEngineThread(): void {
	if (isMainThread || !parentPort) throw new Error('runEngineThread must run in a worker thread');
	const port = parentPort;
	lowerThisThreadPriority((workerData as EngineThreadData).niceness ?? 0);
	// One message at a time, in order. A task sent while the warm-up runs (the pool hands a check
	// to a warming thread rather than start a cold one) ends the warm-up after its current round.
	let queue: Promise<void> = Promise.resolve();
	let tasksWaiting = 0;
	port.on('message', (req: EngineRequest) => {
		if (req.input.task !== 'warm') tasksWaiting++;
		queue = queue.then(() => handle(req));
	});
	const handle = async ({ id, input }: EngineRequest): Promise<void> => {
		const post = (m: EngineMessage) => port.postMessage({ ...m, id });
		try {
			if (input.task === 'warm') {
				post({ type: 'done', result: await warmUp(input.threads ?? defaultSelfIntersectThreads(), () => tasksWaiting > 0) });
				return;
			}
			tasksWaiting--;
			const result = await run(input, post);
			const transfer = result instanceof Uint8Array ? [result.buffer] : (result as RepairOutput | null)?.bytes instanceof Uint8Array ? [(result as RepairOutput).bytes.buffer] : [];
			port.postMessage({ type: 'done', result, id } satisfies EngineMessage & { id: number }, transfer as ArrayBuffer[]);
		} catch (e) {
			if (e instanceof MeshReadError || e instanceof RepairError) post({ type: 'refused', message: e.message });
			else post({ type: 'error', message: e instanceof Error ? e.message : String(e) });
		}
	};
}

if (isWorkerFor(ENGINE_THREAD_TAG)) runEngineThread();
