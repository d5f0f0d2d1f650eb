/**
 * `npm run bench`: marching-cubes tow bodies (fixed seed) at about 35 k, 90 k, 200 k, 1 M and 2 M triangles,
 * written as binary STL into bench-out/ (kept between runs), then every bench case run on every
 * size, each in its own child process (scripts/bench-one.ts) so peak memory does not mix.
 *
 * Then the reader and repair benchmarks (scripts/bench-readers.ts, scripts/bench-repair.ts).
 *
 * Env: BENCH_SIZES=35k,1m (subset of sizes: 35k, 90k, 100k, 200k, 1m, 2m; default all but 100k), BENCH_CASES=report,repair (subset of cases), BENCH_REGEN=1,
 * BENCH_CLI_RUNS=5 (whole-process runs per command-line row; the row is the run with the median wall time).
 * To add a row kind, add a case in scripts/bench-one.ts and its name to CASE_ORDER below.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { availableParallelism, loadavg } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { towBody, type ImplicitShape } from '../src/lib/mesh/testing/implicit-shapes';
import { gridFor, marchingCubes } from '../src/lib/mesh/testing/marching-cubes';
import { writeBinaryStl } from '../src/lib/mesh/write';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const outDir = join(root, 'bench-out');

interface SizeSpec {
	id: string;
	targetTris: number;
	shape: () => ImplicitShape;
}

const SIZES: SizeSpec[] = [
	{ id: '10k', targetTris: 10_000, shape: () => towBody(1) },
	{ id: '20k', targetTris: 20_000, shape: () => towBody(1) },
	{ id: '35k', targetTris: 35_000, shape: () => towBody(1) },
	{ id: '60k', targetTris: 60_000, shape: () => towBody(1) },
	{ id: '90k', targetTris: 90_000, shape: () => towBody(1) },
	{ id: '100k', targetTris: 100_000, shape: () => towBody(1) },
	{ id: '200k', targetTris: 200_000, shape: () => towBody(1) },
	{ id: '1m', targetTris: 1_000_000, shape: () => towBody(1) },
	{ id: '2m', targetTris: 2_000_000, shape: () => towBody(1) }
];

/**
 * 100k stays available (BENCH_SIZES=100k) for the figures quoted beside the cell-size checks;
 * 10k, 20k and 60k for where the command line's worker beside its other stages pays.
 */
const DEFAULT_SIZES = ['35k', '90k', '200k', '1m', '2m'];

/**
 * cli-1t and cli-workers: the command line with the self-intersections forced onto the calling
 * thread alone or onto worker threads, at the sizes around the switch between them
 * (SELF_INTERSECT_WORKER_MIN_FACES, inspect-node.ts), to show where workers pay; cli-alongside:
 * on one worker beside the other stages from any size (SELF_INTERSECT_ALONGSIDE_MIN_FACES).
 */
const CLI_VARIANTS: Record<string, { args: string[]; sizes: string[] }> = {
	cli: { args: [], sizes: [] },
	'cli-1t': { args: ['--threads', '0'], sizes: ['10k', '20k', '35k', '60k', '90k', '200k'] },
	'cli-workers': { args: ['--worker-min-faces', '0'], sizes: ['35k', '90k', '200k'] },
	// One worker for the self-intersections beside the other stages from any size (when a core looks free).
	'cli-alongside': { args: ['--alongside-min-faces', '0'], sizes: ['10k', '20k', '35k', '60k', '90k', '200k'] }
};

const CASE_ORDER = ['cli', 'cli-1t', 'cli-workers', 'cli-alongside', 'report', 'report-warm', 'check-warm', 'server-start', 'self-intersect-1t', 'self-intersect-2w'];

/** Bump when the generator or shapes change, so cached meshes in bench-out/ are rebuilt. */
const GEN_VERSION = 2;

/** Triangle count scales as 1 / cell²: calibrate on a coarse grid, then pick the cell size. */
function cellFor(shape: ImplicitShape, targetTris: number): number {
	const c0 = 0.04;
	const t0 = marchingCubes(shape.field, gridFor(shape.min, shape.max, c0)).indices.length / 3;
	return c0 * Math.sqrt(t0 / targetTris);
}

function ensureMesh(size: SizeSpec): { file: string; tris: number; genMs: number } {
	const file = join(outDir, `tow-body-${size.id}.stl`);
	const metaFile = file + '.json';
	if (existsSync(file) && existsSync(metaFile) && !process.env.BENCH_REGEN) {
		const meta = JSON.parse(readFileSync(metaFile, 'utf8'));
		if (meta.version === GEN_VERSION) return { file, tris: meta.tris, genMs: meta.genMs };
	}
	const t0 = performance.now();
	const shape = size.shape();
	const cell = cellFor(shape, size.targetTris);
	const mesh = marchingCubes(shape.field, gridFor(shape.min, shape.max, cell));
	writeFileSync(file, writeBinaryStl(mesh));
	const tris = mesh.indices.length / 3;
	const genMs = performance.now() - t0;
	writeFileSync(metaFile, JSON.stringify({ version: GEN_VERSION, shape: shape.name, seed: 1, cell, tris, genMs }));
	return { file, tris, genMs };
}

interface Row {
	size: string;
	tris: number;
	case: string;
	wallMs: number;
	cpuMs: number;
	stages: Record<string, number>;
	extra?: Record<string, number | string>;
	maxRssMB: number;
	load: number;
}

/** The malloc settings the app runs with (scripts/lib.sh explains them), unless set already. */
const MALLOC_ENV = {
	MALLOC_ARENA_MAX: process.env.MALLOC_ARENA_MAX ?? '1',
	MALLOC_MMAP_THRESHOLD_: process.env.MALLOC_MMAP_THRESHOLD_ ?? '33554432',
	MALLOC_TRIM_THRESHOLD_: process.env.MALLOC_TRIM_THRESHOLD_ ?? '134217728'
};

/**
 * The command line as a user runs it: a fresh process from start to exit, `--json`, BENCH_CLI_RUNS
 * times (default 5): the row is the run with the median wall time (one slow or lucky run on a
 * shared machine does not move it), with every run's wall and CPU time among its figures.
 */
function runCli(file: string, variant: string): Omit<Row, 'size' | 'tris' | 'load'> {
	const n = Math.max(1, Math.floor(Number(process.env.BENCH_CLI_RUNS ?? 5)) || 1);
	const runs: Omit<Row, 'size' | 'tris' | 'load'>[] = [];
	for (let i = 0; i < n; i++) runs.push(runCliOnce(file, variant));
	const order = runs.map((r) => `${Math.round(r.wallMs)}/${Math.round(r.cpuMs)}`).join(' ');
	const mid = [...runs].sort((a, b) => a.wallMs - b.wallMs)[(n - 1) >> 1];
	return { ...mid, extra: { ...mid.extra, 'runs wall/CPU ms': order } };
}

/** One run of the command line: wall time of the whole process; peak RSS and CPU time from /usr/bin/time; stages from the report's timings. */
function runCliOnce(file: string, variant: string): Omit<Row, 'size' | 'tris' | 'load'> {
	const { cmd, label } = cliCommand();
	const extraArgs = CLI_VARIANTS[variant].args;
	const t0 = performance.now();
	const res = spawnSync('/usr/bin/time', ['-f', 'BENCH-TIME %M %U %S', ...cmd, file, '--json', ...extraArgs], {
		env: { ...process.env, ...MALLOC_ENV },
		encoding: 'utf8',
		maxBuffer: 1 << 26
	});
	const wallMs = performance.now() - t0;
	if (res.status !== 0) throw new Error(`command line on ${file} failed:\n${res.stderr}`);
	const m = /BENCH-TIME (\d+) ([\d.]+) ([\d.]+)/.exec(res.stderr);
	if (!m) throw new Error(`no /usr/bin/time figures in:\n${res.stderr}`);
	const report = JSON.parse(res.stdout) as { timings: Record<string, number>; selfIntersectingPairs: number | null };
	return {
		case: variant,
		wallMs,
		cpuMs: (Number(m[2]) + Number(m[3])) * 1000,
		stages: report.timings,
		extra: { pairs: report.selfIntersectingPairs ?? -1, path: [label, ...extraArgs].join(' ') },
		maxRssMB: Number(m[1]) / 1024
	};
}

/** The built command line (npm run build:cli) when there is one, else the TypeScript source under tsx. */
function cliCommand(): { cmd: string[]; label: string } {
	const built = join(root, 'dist-cli/cli.js');
	if (existsSync(built)) return { cmd: [process.execPath, built], label: 'node dist-cli/cli.js' };
	const tsxCli = createRequire(import.meta.url).resolve('tsx/cli');
	return { cmd: [process.execPath, tsxCli, join(root, 'src/lib/mesh/cli.ts')], label: 'tsx src/lib/mesh/cli.ts' };
}

function runCase(caseName: string, file: string): Omit<Row, 'size' | 'tris' | 'load'> {
	if (caseName in CLI_VARIANTS) return runCli(file, caseName);
	const tsxCli = createRequire(import.meta.url).resolve('tsx/cli');
	const res = spawnSync(process.execPath, [tsxCli, join(root, 'scripts/bench-one.ts'), caseName, file], {
		env: { ...process.env, ...MALLOC_ENV },
		encoding: 'utf8',
		maxBuffer: 1 << 24
	});
	if (res.status !== 0) throw new Error(`bench case ${caseName} on ${file} failed:\n${res.stderr}`);
	const line = res.stdout.trim().split('\n').pop()!;
	return JSON.parse(line);
}

const fmt = (ms: number) => (ms >= 100 ? ms.toFixed(0) : ms.toFixed(1));

function main(): void {
	mkdirSync(outDir, { recursive: true });
	const sizeFilter = process.env.BENCH_SIZES?.split(',');
	const caseFilter = process.env.BENCH_CASES?.split(',');
	const sizes = SIZES.filter((s) => (sizeFilter ? sizeFilter.includes(s.id) : DEFAULT_SIZES.includes(s.id)));
	const cases = CASE_ORDER.filter((c) => !caseFilter || caseFilter.includes(c));
	const rows: Row[] = [];
	for (const size of sizes) {
		const { file, tris, genMs } = ensureMesh(size);
		console.log(`mesh ${size.id}: ${tris.toLocaleString('en')} triangles (${file}, generated in ${fmt(genMs)} ms)`);
		for (const c of cases) {
			const only = CLI_VARIANTS[c]?.sizes;
			if (only && only.length > 0 && !only.includes(size.id)) continue;
			const load = loadavg()[0];
			const r = runCase(c, file);
			rows.push({ size: size.id, tris, ...r, load });
			console.log(`  ${c}: ${fmt(r.wallMs)} ms wall, ${fmt(r.cpuMs)} ms CPU, peak RSS ${r.maxRssMB.toFixed(0)} MB (load average ${load.toFixed(1)})`);
		}
	}

	console.log('\n| size | triangles | case | wall ms | CPU ms (all threads) | peak RSS MB | load avg | stages (ms) | figures |');
	console.log('|---|---:|---|---:|---:|---:|---:|---|---|');
	for (const r of rows) {
		const stages = Object.entries(r.stages).map(([k, v]) => `${k} ${fmt(v)}`).join(', ');
		const extra = Object.entries(r.extra ?? {}).map(([k, v]) => `${k} ${typeof v === 'number' ? v.toLocaleString('en') : v}`).join(', ');
		console.log(`| ${r.size} | ${r.tris.toLocaleString('en')} | ${r.case} | ${fmt(r.wallMs)} | ${fmt(r.cpuMs)} | ${r.maxRssMB.toFixed(0)} | ${r.load.toFixed(1)} | ${stages} | ${extra} |`);
	}
	const busiest = Math.max(...rows.map((r) => r.load));
	if (busiest > availableParallelism()) {
		console.log(`\nNote: load average reached ${busiest.toFixed(1)} on ${availableParallelism()} cores during the run; wall times are stretched by other jobs, CPU ms less so.`);
	}

	const pick = (size: string, c: string) => rows.find((r) => r.size === size && r.case === c);
	console.log('');
	for (const c of cases) {
		const a = pick('1m', c), b = pick('2m', c);
		if (a && b) {
			const ratio = b.wallMs / a.wallMs;
			const cpuRatio = b.cpuMs / a.cpuMs;
			console.log(`${c}: 2M / 1M time ratio ${ratio.toFixed(2)}× wall, ${cpuRatio.toFixed(2)}× CPU (target ≤ 2.1×) ${ratio <= 2.1 ? 'PASS' : 'FAIL'}`);
		}
	}
	// Targets: the whole report at 1 M faces cold (the command line, a fresh process, start to exit)
	// under 1.5 s, warm (a kept engine thread, as the server runs) under 1.0 s, peak RSS under 1 GB;
	// the command line at 35 k-90 k faces under 0.4 s and at 200 k under 0.8 s.
	const target = (what: string, ms: number | undefined, limit: number, unit = 'ms') =>
		ms !== undefined && console.log(`${what} ${fmt(ms)} ${unit} (target < ${limit} ${unit}) ${ms < limit ? 'PASS' : 'FAIL'}`);
	target('report 1M wall, cold: the command line as a whole process', pick('1m', 'cli')?.wallMs, 1500);
	target('report 1M wall, warm: a kept engine thread', pick('1m', 'report-warm')?.wallMs, 1000);
	target('report 1M peak RSS, command line', pick('1m', 'cli')?.maxRssMB, 1024, 'MB');
	target('report 1M peak RSS, kept engine thread', pick('1m', 'report-warm')?.maxRssMB, 1024, 'MB');
	for (const size of ['35k', '90k']) target(`command line ${size}, whole process`, pick(size, 'cli')?.wallMs, 400);
	target('command line 200k, whole process', pick('200k', 'cli')?.wallMs, 800);
	const rep = pick('1m', 'report');
	if (rep) console.log(`report 1M wall, first check in a fresh process, from the bytes in memory ${fmt(rep.wallMs)} ms (for information)`);
	const start = pick('90k', 'server-start');
	if (start) console.log(`server start, 90k: ${JSON.stringify(start.extra)}`);
	const si = pick('1m', 'self-intersect-2w');
	if (si) console.log(`self-intersections 1M alone on 2 workers, cold ${fmt(si.wallMs)} ms (for information: in the report they run beside the other stages)`);
}

/** Benchmarks kept in scripts of their own, run as child processes after the table above. */
const EXTRA_SCRIPTS: { name: string; file: string; what: string }[] = [
	{ name: 'small', file: 'scripts/bench-small.ts', what: 'per-stage times of small meshes (12 to 5,120 faces) in a fresh command-line process' },
	{ name: 'readers', file: 'scripts/bench-readers.ts', what: 'file readers at 1M triangles (binary STL, binary PLY, OBJ, and @loaders.gl/ply for comparison)' },
	{ name: 'repair', file: 'scripts/bench-repair.ts', what: 'the standard repair recipe on a 1M-triangle tow body with injected defects' },
	{ name: 'thickness', file: 'scripts/bench-thickness.ts', what: 'cell-size checks (wall thickness, gap, longest and sharp edges) at 100k and 1M triangles' }
];

main();
{
	const caseFilter = process.env.BENCH_CASES?.split(',');
	const tsxCli = createRequire(import.meta.url).resolve('tsx/cli');
	for (const x of EXTRA_SCRIPTS) {
		if (caseFilter && !caseFilter.includes(x.name)) continue;
		console.log(`\n## ${x.name}: ${x.what}`);
		const res = spawnSync(process.execPath, [tsxCli, join(root, x.file)], { stdio: 'inherit', env: { ...process.env, ...MALLOC_ENV } });
		if (res.status !== 0) console.log(`${x.file} exited with ${res.status}`);
	}
}
