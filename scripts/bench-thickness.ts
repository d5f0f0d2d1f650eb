/**
 * Cell-size checks bench (thickness.ts): wall thickness, gap, longest and sharp edges on the
 * marching-cubes tow bodies (seed 1) of about 100 k and 1 M triangles from bench-out/ (made by
 * scripts/bench.ts; made here the same way when missing). Each size runs in its own child process
 * so peak RSS is its own; the self-intersection count on this thread is timed beside it, the
 * stage the cell-size checks are held against.
 *
 * Run alone: npx tsx scripts/bench-thickness.ts   (env BENCH_SIZES=100k,1m; CELL_SIZE in model units,
 * default the bench mesh's marching-cubes cell × 4, i.e. a CFD grid four times coarser than the facets).
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { towBody } from '../src/lib/mesh/testing/implicit-shapes';
import { gridFor, marchingCubes } from '../src/lib/mesh/testing/marching-cubes';
import { readMesh } from '../src/lib/mesh/read';
import { findSelfIntersections } from '../src/lib/mesh/self-intersect';
import { analyseCellSize, buildRayBvh } from '../src/lib/mesh/thickness';
import { faceDistancesBothParallel } from '../src/lib/mesh/thickness-node';
import { inspectFileNode } from '../src/lib/mesh/inspect-node';
import { writeBinaryStl } from '../src/lib/mesh/write';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const outDir = join(root, 'bench-out');
const TARGETS: Record<string, number> = { '100k': 100_000, '1m': 1_000_000 };

function ensure(id: string): { file: string; cell: number } {
	const file = join(outDir, `tow-body-${id}.stl`);
	if (existsSync(file) && existsSync(file + '.json')) return { file, cell: JSON.parse(readFileSync(file + '.json', 'utf8')).cell };
	mkdirSync(outDir, { recursive: true });
	const shape = towBody(1);
	const c0 = 0.04;
	const t0 = marchingCubes(shape.field, gridFor(shape.min, shape.max, c0)).indices.length / 3;
	const cell = c0 * Math.sqrt(t0 / TARGETS[id]);
	const mesh = marchingCubes(shape.field, gridFor(shape.min, shape.max, cell));
	writeFileSync(file, writeBinaryStl(mesh));
	// Same meta as scripts/bench.ts writes, so it reuses the file (its GEN_VERSION is 2).
	writeFileSync(file + '.json', JSON.stringify({ version: 2, shape: shape.name, seed: 1, cell, tris: mesh.indices.length / 3, genMs: 0 }));
	return { file, cell };
}

async function child(file: string, mcCell: number): Promise<void> {
	const mesh = readMesh(new Uint8Array(readFileSync(file)), file);
	const cellSize = Number(process.env.CELL_SIZE ?? 4 * mcCell);
	const c0 = process.cpuUsage();
	const t0 = performance.now();
	const r = analyseCellSize(mesh, { cellSize });
	const wallMs = performance.now() - t0;
	const c = process.cpuUsage(c0);
	const rssAfterCellSize = process.resourceUsage().maxRSS / 1024;
	// Rays alone on 2 threads (this one and one worker, started cold here), the BVH built already.
	const rayBvh = buildRayBvh(mesh);
	const p0 = performance.now();
	await faceDistancesBothParallel(mesh, { cellSize, maxDistance: r.maxDistance, rayBvh, threads: 2 });
	const rays2Ms = performance.now() - p0;
	const t1 = performance.now();
	const si = findSelfIntersections(mesh);
	const siMs = performance.now() - t1;
	// The whole report as the server's engine thread makes it (2 threads), warm, without and with the stage.
	const bytes = new Uint8Array(readFileSync(file));
	await inspectFileNode(bytes, file, { threads: 2 });
	const r0 = performance.now();
	await inspectFileNode(bytes, file, { threads: 2 });
	const reportWithoutMs = performance.now() - r0;
	const r1 = performance.now();
	await inspectFileNode(bytes, file, { threads: 2, cellSize });
	const reportWithMs = performance.now() - r1;
	const out = {
		reportWithoutMs,
		reportWithMs,
		tris: mesh.indices.length / 3,
		cellSize,
		wallMs,
		cpuMs: (c.user + c.system) / 1000,
		stages: r.timings,
		rays: r.thickness.rays,
		thinnest: r.wall.min,
		narrowestGap: r.narrowGap.min,
		thinFaces: r.wall.flaggedFaces,
		gapFaces: r.narrowGap.flaggedFaces,
		sharpEdges: r.sharp.verts.length / 2,
		coarseAreaShare: r.longEdges.areaShareOver,
		peakRssMB: rssAfterCellSize,
		rays2Ms,
		peakRssAllMB: process.resourceUsage().maxRSS / 1024,
		selfIntersectMs: siMs,
		selfIntersectPairs: si.pairs
	};
	process.stdout.write(JSON.stringify(out) + '\n');
}

function main(): void {
	if (process.argv[2] === '--one') {
		void child(process.argv[3], Number(process.argv[4])).then(() => process.exit(0));
		return;
	}
	const sizes = (process.env.BENCH_SIZES?.split(',') ?? Object.keys(TARGETS)).filter((s) => s in TARGETS);
	const fmt = (ms: number) => (ms >= 100 ? ms.toFixed(0) : ms.toFixed(1));
	// JSON turns Infinity (no hit anywhere) into null.
	const num = (x: number | null) => (x === null ? 'none' : x.toPrecision(4));
	console.log('| triangles | cell size | cell-size checks wall ms | CPU ms | stages (ms) | line queries (both ways) | peak RSS MB | rays on 2 threads ms | self-intersections alone, same thread, ms | thinnest wall | narrowest gap | whole report without / with, 2 threads, warm, ms |');
	console.log('|---:|---:|---:|---:|---|---:|---:|---:|---:|---:|---:|---:|');
	for (const id of sizes) {
		const { file, cell } = ensure(id);
		const res = spawnSync(process.execPath, [...process.execArgv, fileURLToPath(import.meta.url), '--one', file, String(cell)], { encoding: 'utf8', maxBuffer: 1 << 24 });
		if (res.status !== 0) {
			console.log(`${id}: failed\n${res.stderr}`);
			continue;
		}
		const o = JSON.parse(res.stdout.trim().split('\n').pop()!);
		const stages = Object.entries(o.stages as Record<string, number>).map(([k, v]) => `${k} ${fmt(v)}`).join(', ');
		console.log(`| ${o.tris.toLocaleString('en')} | ${o.cellSize.toPrecision(3)} | ${fmt(o.wallMs)} | ${fmt(o.cpuMs)} | ${stages} | ${o.rays.toLocaleString('en')} | ${o.peakRssMB.toFixed(0)} | ${fmt(o.rays2Ms)} | ${fmt(o.selfIntersectMs)} | ${num(o.thinnest)} | ${num(o.narrowestGap)} | ${fmt(o.reportWithoutMs)} / ${fmt(o.reportWithMs)} |`);
	}
}

main();
