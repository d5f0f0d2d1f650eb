/**
 * Node entry point: self-intersections run on worker threads while topology, measures and
 * projections run on the calling thread, which then joins the self-intersection traversal for
 * whatever is left of it; the report is the same as inspectBytes gives.
 */
import { readFileSync } from 'node:fs';
import { availableParallelism, loadavg } from 'node:os';
import { readMesh } from './read';
import { findSelfIntersections } from './self-intersect';
import { startSelfIntersections, warmSelfIntersectPool } from './self-intersect-node';
import { validateMesh } from './validate';
import { type InspectionReport } from './report';
import { attachSelfIntersections, buildReportParts, type ReportByproducts } from './build-report';
import type { InspectRunOptions } from './inspect';
import { DEFAULT_SAMPLE_LIMIT } from './tolerances';
import { DEFAULT_MAX_FACES } from './types';
import { analyseCellSize, cellSizeChecksOf, cellSizeMaxDistance, DEFAULT_THIN_CELLS } from './thickness';
import { startFaceDistancesParallel, type DistanceRun } from './thickness-node';

export interface InspectNodeOptions extends InspectRunOptions {
	/**
	 * Worker threads for self-intersections beside the calling thread; default one per core less
	 * the calling thread's own (defaultSelfIntersectThreads). The calling thread also joins the
	 * traversal once its own stages are done. 0: the calling thread alone, after its other stages.
	 */
	threads?: number;
	/**
	 * Below this many faces the self-intersections run on the calling thread, with no worker
	 * threads (default SELF_INTERSECT_WORKER_MIN_FACES); 0 uses the workers whatever the size.
	 */
	workerMinFaces?: number;
	/**
	 * Below the worker switch, start the wall-and-gap rays (opts.cellSize) on a kept worker of this
	 * thread's wall-and-gap pool while this thread builds the report and counts self-intersections,
	 * then join them; only when the pool has a worker started and idle (a kept engine thread's
	 * warm-up starts it), never a cold one. Same results.
	 */
	wallsAlongside?: boolean;
	/**
	 * Below the worker switch, from this many faces, count the self-intersections on one worker
	 * thread while this thread builds the rest of the report, when a core looks free (coreLooksFree:
	 * a worker on a busy machine only adds its start-up). Off unless set (the command line sets SELF_INTERSECT_ALONGSIDE_MIN_FACES; a
	 * kept engine thread runs its wall-and-gap rays alongside instead). Same results.
	 */
	alongsideMinFaces?: number;
	/** Whether a core is free for alongsideMinFaces (default coreLooksFree). */
	coreIsFree?: () => boolean;
	/** Stage names: read, topology, measures, shells, projection, hints, self-intersections, done. */
	onProgress?: (stage: string, percent: number) => void;
	signal?: AbortSignal;
}

export async function inspectFileNode(bytes: Uint8Array, fileName: string, opts: InspectNodeOptions = {}): Promise<InspectionReport> {
	const t0 = performance.now();
	const progress = (stage: string, percent: number) => opts.onProgress?.(stage, percent);
	const maxThreads = opts.threads ?? defaultSelfIntersectThreads();
	const minFaces = opts.workerMinFaces ?? SELF_INTERSECT_WORKER_MIN_FACES;
	const sampleLimit = opts.sampleLimit ?? DEFAULT_SAMPLE_LIMIT;
	const alongsideMin = opts.alongsideMinFaces ?? Infinity;
	// Worker start-up (module loading in each thread) then overlaps reading the file, when the
	// file can hold enough faces to use them.
	const bound = maxFacesIn(bytes, fileName);
	const alongside = !opts.skipSelfIntersections && maxThreads > 0 && alongsideMin < minFaces && bound >= alongsideMin && (opts.coreIsFree ?? coreLooksFree)();
	if (!opts.skipSelfIntersections && maxThreads > 0 && bound >= minFaces) warmSelfIntersectPool(maxThreads);
	else if (alongside) warmSelfIntersectPool(1);
	progress('read', 0);
	const maxFaces = opts.maxFaces ?? DEFAULT_MAX_FACES;
	const parsed = readMesh(bytes, fileName, { maxFaces });
	const timings: Record<string, number> = { ...(opts.timings ?? {}), read: performance.now() - t0 };
	validateMesh(parsed, { maxFaces });
	const faceCount = parsed.indices.length / 3;
	const threads = faceCount >= minFaces ? maxThreads : alongside && faceCount >= alongsideMin ? 1 : 0;
	// Started before the synchronous analysis below so the workers run alongside it. A rejection
	// is caught here and rethrown at the await, so it never goes unhandled meanwhile.
	const siRun = opts.skipSelfIntersections || threads === 0 ? null : startSelfIntersections(parsed, { sampleLimit, threads, signal: opts.signal });
	let siError: unknown = null;
	const siPromise = siRun?.finish().catch((e: unknown) => {
		siError = e;
		return null;
	});
	const cellSize = opts.cellSize;
	const maxDistance = cellSize === undefined ? 0 : cellSizeMaxDistance({ cellSize });
	// The rays on a kept worker from here on, beside this thread's own stages (wallsAlongside).
	let walls: DistanceRun | null = null;
	let wallsT0 = 0;
	if (opts.wallsAlongside && threads === 0 && cellSize !== undefined && cellSize > 0 && Number.isFinite(cellSize) && parsed.indices.length > 0) {
		wallsT0 = performance.now();
		walls = startFaceDistancesParallel(parsed, { cellSize, maxDistance, threads: 2, keptOnly: true });
		// No kept worker idle (or a mesh of one chunk): nothing started, the rays run after the report.
		if (walls.workers === 0) walls = null;
		else timings.wallsStart = performance.now() - wallsT0;
	}
	const byproducts: ReportByproducts = {};
	let report: InspectionReport;
	try {
		let faceShell: Int32Array;
		({ report, faceShell } = buildReportParts(
			parsed,
			{
				...opts,
				fileName,
				timings,
				selfIntersections: null,
				onProgress: (stage, percent) => progress(stage, Math.round(percent * 0.8))
			},
			byproducts
		));
		if (siRun && siPromise) {
			progress('self-intersections', 80);
			const tWait = performance.now();
			siRun.help();
			const si = await siPromise;
			if (siError) throw siError;
			if (si) {
				attachSelfIntersections(report, si, faceShell);
				// How long the report spent on self-intersections after its own stages were done
				// (taking traversal tasks itself, then waiting for the workers' last ones).
				report.timings.selfIntersectionsWait = performance.now() - tWait;
			}
		} else if (!opts.skipSelfIntersections) {
			progress('self-intersections', 80);
			attachSelfIntersections(report, findSelfIntersections(parsed, { sampleLimit }), faceShell);
		}
	} catch (e) {
		// The kept worker goes back to its pool before the error does.
		await walls?.finish().catch(() => null);
		throw e;
	}
	if (cellSize !== undefined && report.faces > 0) {
		progress('walls and gaps', 90);
		const t1 = walls ? wallsT0 : performance.now();
		const tJoin = performance.now();
		const thinCells = opts.thinCells ?? DEFAULT_THIN_CELLS;
		// On the worker path the rays take the same threads in all: the workers and this one.
		const rayThreads = faceCount >= minFaces ? threads + 1 : 1;
		const run = walls ?? startFaceDistancesParallel(parsed, { cellSize, maxDistance, threads: rayThreads });
		const distances = await run.finish();
		if (walls) report.timings.wallsWait = performance.now() - tJoin;
		const res = analyseCellSize(parsed, { cellSize, thinCells, maxDistance, distances, edges: byproducts.edges });
		report.cellSizeChecks = cellSizeChecksOf(res, thinCells, performance.now() - t1);
		report.timings.cellSize = report.cellSizeChecks.ms;
	}
	report.timings.total = performance.now() - t0;
	progress('done', 100);
	return report;
}

/**
 * Faces from which the command line counts self-intersections on one worker thread beside its
 * other stages when a core looks free (InspectNodeOptions.alongsideMinFaces): README, "Engine bench".
 */
export const SELF_INTERSECT_ALONGSIDE_MIN_FACES = 20_000;

/**
 * A core is likely idle beside this thread: on Linux, fewer threads runnable right now (besides
 * this one) than the cores less one, the least of three looks half a millisecond apart (so a
 * momentary burst does not count); elsewhere, the one-minute load average under the cores less a
 * half. The load average lags by a minute: a run of commands one after another raised it to 1.3–1.8
 * on 2 cores while each found the other core idle, and the worker was then left unused.
 */
export function coreLooksFree(): boolean {
	const cores = availableParallelism();
	const others = otherRunnableThreads();
	return others === null ? loadavg()[0] < cores - 0.5 : others <= cores - 2;
}

/** Runnable threads on the machine besides this one (/proc/loadavg, fourth field), or null when unknown. */
function otherRunnableThreads(): number | null {
	let least = Infinity;
	const pause = new Int32Array(new SharedArrayBuffer(4));
	for (let i = 0; i < 3; i++) {
		if (i > 0) Atomics.wait(pause, 0, 0, 0.5);
		let text: string;
		try {
			text = readFileSync('/proc/loadavg', 'latin1');
		} catch {
			return null;
		}
		const m = /^\S+ \S+ \S+ (\d+)\//.exec(text);
		if (!m) return null;
		least = Math.min(least, Number(m[1]) - 1);
	}
	return Math.max(0, least);
}

/**
 * One self-intersection worker per core beside the calling thread's own (at least one): the
 * calling thread spends the stage building the rest of the report, so one worker per core
 * oversubscribes the cores until it is done. On 2 cores, 1 M triangles, whole process: 1 worker
 * against 2, 0.89× the wall (README, "Engine bench").
 */
export function defaultSelfIntersectThreads(): number {
	return Math.max(1, availableParallelism() - 1);
}

/**
 * Faces from which worker threads pay for their start-up in the self-intersection stage. Below
 * it, the calling thread counts them itself after its other stages. Set above the largest size at
 * which the bench's cli-workers row (workers forced) came out slower than its cli-1t row (one
 * thread), wall and CPU: README, "Engine bench".
 */
export const SELF_INTERSECT_WORKER_MIN_FACES = 250_000;

/**
 * An upper bound on the faces a file can hold, from its size alone: exact for a binary STL whose
 * header count matches its size; otherwise no format spends fewer than 12 bytes a face (a binary
 * PLY face with an 8-bit count and three 32-bit indices is 13).
 */
function maxFacesIn(bytes: Uint8Array, fileName: string): number {
	if (/\.stl$/i.test(fileName) && bytes.byteLength >= 84) {
		const n = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength).getUint32(80, true);
		if (84 + 50 * n === bytes.byteLength) return n;
	}
	return Math.floor(bytes.byteLength / 12);
}
