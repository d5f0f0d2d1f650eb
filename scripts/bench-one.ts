/**
 * One benchmark case on one mesh file, in its own process so peak memory (maxRSS, which includes
 * worker threads) belongs to this case alone. Prints one JSON line on stdout; scripts/bench.ts
 * spawns it and builds the table.
 *
 *   tsx scripts/bench-one.ts CASE FILE
 *
 * To add a case: add an entry to CASES returning stage timings (ms) and optional extra figures.
 */
import { existsSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { defaultSelfIntersectThreads } from '../src/lib/mesh/inspect-node';
import { readMesh } from '../src/lib/mesh/read';
import type { InspectionReport } from '../src/lib/mesh/report';
import { EnginePool } from '../src/lib/server/jobs/engine-pool';
import { ENGINE_THREAD_TAG, ENGINE_THREAD_URL } from '../src/lib/server/jobs/engine-thread';
import { inspectMesh } from '../src/lib/mesh/inspect';
import { findSelfIntersections } from '../src/lib/mesh/self-intersect';
import { findSelfIntersectionsParallel } from '../src/lib/mesh/self-intersect-node';

export interface CaseOutput {
	/** Wall time of the whole case, from the file bytes in memory to the result. */
	wallMs: number;
	stages: Record<string, number>;
	extra?: Record<string, number | string>;
	/** CPU time of the measured part when the case measures it itself (else the whole process run). */
	cpuMs?: number;
}

type BenchCase = (bytes: Uint8Array, fileName: string) => Promise<CaseOutput>;

/**
 * What the server's check job asks of the engine (check.ts): walls, gaps and edges against the
 * project's cell size (BENCH_CELL_SIZE, default 0.005, the demo keel-bulb project's, in metres),
 * flagged under 2 cells, flow along x. BENCH_WORKER_MIN_FACES overrides the engine thread's
 * ENGINE_WORKER_MIN_FACES (to find where its workers pay).
 */
function serverCheckTask(copy: Uint8Array, fileName: string) {
	const min = process.env.BENCH_WORKER_MIN_FACES;
	return {
		task: 'check' as const,
		bytes: copy,
		fileName,
		options: { fileName, cellSize: Number(process.env.BENCH_CELL_SIZE ?? 0.005), thinCells: 2, flowDirection: [1, 0, 0] as [number, number, number], units: 'm', minEdgeLength: 0 },
		threads: defaultSelfIntersectThreads(),
		workerMinFaces: min === undefined ? undefined : Number(min)
	};
}

/** Median of five checks of a kept engine thread after two unmeasured ones. */
async function keptThreadChecks(bytes: Uint8Array, check: (copy: Uint8Array) => Promise<InspectionReport>, pool: EnginePool): Promise<CaseOutput> {
	const warmUp: number[] = [];
	for (let k = 0; k < 2; k++) {
		const copy = bytes.slice();
		const t0 = performance.now();
		await check(copy);
		warmUp.push(performance.now() - t0);
	}
	const runs: { wallMs: number; cpuMs: number; report: InspectionReport }[] = [];
	for (let k = 0; k < 5; k++) {
		const copy = bytes.slice();
		const c0 = process.cpuUsage();
		const t0 = performance.now();
		const report = await check(copy);
		const wallMs = performance.now() - t0;
		const c = process.cpuUsage(c0);
		runs.push({ wallMs, cpuMs: (c.user + c.system) / 1000, report });
	}
	await pool.close();
	const order = runs.map((r) => Math.round(r.wallMs)).join('/');
	runs.sort((a, b) => a.wallMs - b.wallMs);
	const mid = runs[2];
	return {
		wallMs: mid.wallMs,
		cpuMs: mid.cpuMs,
		stages: mid.report.timings,
		extra: {
			pairs: mid.report.selfIntersectingPairs ?? -1,
			'warm-up checks ms': warmUp.map((w) => Math.round(w)).join('/'),
			'measured checks ms': order,
			path: 'kept engine thread, median of checks 3-7'
		}
	};
}

const inspectNodePath = fileURLToPath(new URL('../src/lib/mesh/inspect-node.ts', import.meta.url));

export const CASES: Record<string, BenchCase> = {
	/** The whole report: inspect-node.ts when it exists (self-intersections on workers beside topology), else the single-thread path. */
	async report(bytes, fileName) {
		const t0 = performance.now();
		if (existsSync(inspectNodePath)) {
			const mod = (await import(inspectNodePath)) as {
				inspectFileNode: (b: Uint8Array, n: string, o: object) => Promise<{ timings: Record<string, number>; selfIntersectingPairs: number | null }>;
			};
			const report = await mod.inspectFileNode(bytes, fileName, {});
			return { wallMs: performance.now() - t0, stages: report.timings, extra: { pairs: report.selfIntersectingPairs ?? -1, path: 'inspect-node' } };
		}
		const parsed = readMesh(bytes, fileName);
		const readMs = performance.now() - t0;
		const siP = findSelfIntersectionsParallel(parsed, { threads: 1 });
		const report = inspectMesh(parsed, { skipSelfIntersections: true, timings: { read: readMs } });
		const si = await siP;
		const stages = { ...report.timings, selfIntersect: si.ms };
		delete stages.total;
		return { wallMs: performance.now() - t0, stages, extra: { pairs: si.pairs, path: 'inspect + 1 worker' } };
	},

	/**
	 * The whole report as the server runs it in steady state: a kept engine thread (engine-pool.ts,
	 * the server's own pool, niceness 0 here) that has checked this file twice already (first
	 * checks fault in memory and compile code); the median of five further checks. Wall time is
	 * from handing over the bytes to holding the report.
	 */
	async 'report-warm'(bytes, fileName) {
		const pool = new EnginePool({ url: ENGINE_THREAD_URL, tag: ENGINE_THREAD_TAG, niceness: 0, maxIdle: 1, idleMs: 60_000 });
		const limits = { timeLimitMs: 600_000, memoryLimitMb: 4096 };
		// Each task takes its own copy of the bytes (they are transferred), made before the clock starts.
		const check = (copy: Uint8Array): Promise<InspectionReport> =>
			pool.run<InspectionReport>({ task: 'check', bytes: copy, fileName, options: { fileName }, threads: defaultSelfIntersectThreads() }, limits, () => {});
		return keptThreadChecks(bytes, check, pool);
	},

	/**
	 * The check as the server's job asks for it (serverCheckTask: walls and gaps against a cell size
	 * included) in a kept engine thread warmed as the server warms it; median of checks 3-7.
	 */
	async 'check-warm'(bytes, fileName) {
		const pool = new EnginePool({ url: ENGINE_THREAD_URL, tag: ENGINE_THREAD_TAG, niceness: 0, maxIdle: 1, idleMs: 60_000, keepWarm: 1 });
		const limits = { timeLimitMs: 600_000, memoryLimitMb: 4096 };
		await pool.warm(limits.memoryLimitMb);
		const check = (copy: Uint8Array): Promise<InspectionReport> => pool.run<InspectionReport>(serverCheckTask(copy, fileName), limits, () => {});
		return keptThreadChecks(bytes, check, pool);
	},

	/**
	 * The server's engine pool from its start: warm() as the server calls it (time), then the first
	 * check (wall, the figure a user meets after a restart) and a second one; resident memory after
	 * warming, after the checks, and once the thread that ran this file was retired (files of
	 * retireBytes or more) and a fresh warm one took its place.
	 */
	async 'server-start'(bytes, fileName) {
		const retireIdleMs = 1000;
		const pool = new EnginePool({ url: ENGINE_THREAD_URL, tag: ENGINE_THREAD_TAG, niceness: 0, maxIdle: 1, idleMs: 60_000, keepWarm: 1, retireIdleMs });
		const limits = { timeLimitMs: 600_000, memoryLimitMb: 4096 };
		const rss = () => process.memoryUsage().rss / 2 ** 20;
		const check = (copy: Uint8Array): Promise<InspectionReport> => pool.run<InspectionReport>(serverCheckTask(copy, fileName), limits, () => {});
		const rss0 = rss();
		let t0 = performance.now();
		await pool.warm(limits.memoryLimitMb);
		const warmMs = performance.now() - t0;
		const rssWarm = rss();
		const copies = [bytes.slice(), bytes.slice()];
		// Minor page faults (all threads): memory a check touches for the first time.
		const faults = () => process.resourceUsage().minorPageFault;
		const cpu = (c0: NodeJS.CpuUsage) => {
			const c = process.cpuUsage(c0);
			return Math.round((c.user + c.system) / 1000);
		};
		let f0 = faults();
		let c0 = process.cpuUsage();
		t0 = performance.now();
		const first = await check(copies[0]);
		const firstMs = performance.now() - t0;
		const firstFaults = faults() - f0;
		const firstCpu = cpu(c0);
		f0 = faults();
		c0 = process.cpuUsage();
		t0 = performance.now();
		await check(copies[1]);
		const secondMs = performance.now() - t0;
		const secondFaults = faults() - f0;
		const secondCpu = cpu(c0);
		const rssChecked = rss();
		const retired = bytes.byteLength >= 24 * 1024 * 1024;
		if (retired) {
			const before = pool.idleThreadIds[0];
			for (let k = 0; k < 600 && pool.idleThreadIds[0] === before; k++) await new Promise((r) => setTimeout(r, 50));
			await pool.warm(limits.memoryLimitMb);
			await new Promise((r) => setTimeout(r, 1000));
		}
		const rssAfter = rss();
		await pool.close();
		return {
			wallMs: firstMs,
			stages: first.timings,
			extra: {
				'warm() ms': Math.round(warmMs),
				'first check ms': Math.round(firstMs),
				'second check ms': Math.round(secondMs),
				'page faults first / second check': `${firstFaults} / ${secondFaults}`,
				'CPU ms first / second check': `${firstCpu} / ${secondCpu}`,
				'RSS MB at start / warm / after 2 checks / idle later': [rss0, rssWarm, rssChecked, rssAfter].map((x) => Math.round(x)).join(' / '),
				'idle later': retired ? 'thread retired and replaced' : 'thread kept (file under 24 MB)'
			}
		};
	},

	'self-intersect-1t': (bytes, fileName) => selfIntersectCase(bytes, fileName, 0),
	'self-intersect-2w': (bytes, fileName) => selfIntersectCase(bytes, fileName, 2)
};

/** threads 0: findSelfIntersections on this thread; else that many workers. */
async function selfIntersectCase(bytes: Uint8Array, fileName: string, threads: number): Promise<CaseOutput> {
	const parsed = readMesh(bytes, fileName);
	const t0 = performance.now();
	const r = threads === 0 ? findSelfIntersections(parsed) : await findSelfIntersectionsParallel(parsed, { threads });
	const wallMs = performance.now() - t0;
	const s = r.stats!;
	return {
		wallMs,
		stages: { buildBvh: s.buildMs, traverse: s.traverseMs },
		extra: { pairs: r.pairs, candidatePairs: s.candidatePairs, clearSkips: s.clearSkips, exactTests: s.exactTests }
	};
}

async function main(): Promise<void> {
	const [caseName, file] = process.argv.slice(2);
	const run = CASES[caseName];
	if (!run || !file) {
		console.error(`usage: tsx scripts/bench-one.ts CASE FILE   (cases: ${Object.keys(CASES).join(', ')})`);
		process.exit(2);
	}
	const bytes = new Uint8Array(readFileSync(file));
	const cpu0 = process.cpuUsage();
	const out = await run(bytes, file);
	const cpu = process.cpuUsage(cpu0);
	// Process-wide CPU time (all threads, workers included): a figure that stays meaningful when
	// other jobs share the machine and stretch the wall time.
	const cpuMs = out.cpuMs ?? (cpu.user + cpu.system) / 1000;
	const maxRssMB = process.resourceUsage().maxRSS / 1024; // maxRSS is in kilobytes
	process.stdout.write(JSON.stringify({ case: caseName, file, ...out, cpuMs, maxRssMB }) + '\n');
	process.exit(0);
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
	main().catch((e) => {
		console.error(e instanceof Error ? e.stack : e);
		process.exit(1);
	});
}
