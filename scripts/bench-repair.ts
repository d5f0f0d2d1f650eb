/**
 * Repair bench: the standard recipe on a marching-cubes tow body (seed 1) of about 1 M triangles
 * with injected defects (three holes, a flipped patch, a seam opened by 1e-7, three specks).
 * Prints time per step, the whole recipe, the deviation measure, and peak RSS.
 *
 * Run alone: npx tsx scripts/bench-repair.ts  (env BENCH_REPAIR_TRIS=250000 for another size).
 * scripts/bench.ts can import runRepairBench() and print its rows.
 */
import os from 'node:os';
import { pathToFileURL } from 'node:url';
import { towBody } from '../src/lib/mesh/testing/implicit-shapes';
import { gridFor, marchingCubes } from '../src/lib/mesh/testing/marching-cubes';
import { applyStep, meshDeviation, STANDARD_RECIPE } from '../src/lib/mesh/repair';
import { defectiveMesh } from '../src/lib/mesh/testing/repair-support';
import { inspectMesh } from '../src/lib/mesh/inspect';
import { asParsed } from '../src/lib/mesh/testing/test-meshes';

export interface RepairBenchRow {
	step: string;
	/** Wall-clock and CPU (user + system) milliseconds. */
	ms: number;
	cpuMs: number;
	facesBefore: number;
	facesAfter: number;
	what: string;
}

export interface RepairBenchResult {
	triangles: number;
	cell: number;
	rows: RepairBenchRow[];
	recipeMs: number;
	recipeCpuMs: number;
	deviationMs: number;
	deviationCpuMs: number;
	hausdorff: number;
	peakRssMb: number;
	closed: boolean;
}

function summary(op: string, counts: unknown): string {
	const c = counts as Record<string, unknown>;
	switch (op) {
		case 'weld': return `${c.verticesMerged} merged, ${c.facesDropped} faces dropped`;
		case 'remove-degenerate-faces': return `${c.degenerateFaces} degenerate, ${c.duplicateFaces} duplicate`;
		case 'remove-small-shells': return `${c.shellsRemoved} of ${c.shellsBefore} shells removed`;
		case 'split-non-manifold-vertices': return `${c.verticesSplit} vertices split, ${c.nonManifoldEdgesSplit} edges separated, ${c.nonManifoldEdgesLeft} left`;
		case 'orient': return `${c.facesFlipped} faces flipped, ${c.shellsInverted} inverted`;
		case 'fill-holes': return `${c.holesFilled} filled (+${c.trianglesAdded} tris), ${(c.holesLeft as unknown[]).length} left`;
		case 'collapse-short-edges': return `${c.edgesCollapsed} collapsed, ${c.shortEdgesLeft} short left`;
		default: return '';
	}
}

export function runRepairBench(targetTris = 1_000_000): RepairBenchResult {
	const shape = towBody(1);
	// Triangle count scales as 1 / cell²: calibrate on a coarse grid.
	const c0 = 0.04;
	const t0Tris = marchingCubes(shape.field, gridFor(shape.min, shape.max, c0)).indices.length / 3;
	const cell = c0 * Math.sqrt(t0Tris / targetTris);
	const { clean, broken } = defectiveMesh(shape, cell);
	// Steps run one by one (as applyRecipe does) so CPU time can be taken beside wall time: on a
	// shared machine the wall time includes waiting for a core.
	const rows: RepairBenchRow[] = [];
	const t0 = performance.now();
	let mesh = broken;
	for (const step of STANDARD_RECIPE(cell)) {
		const w0 = performance.now(), c0 = process.cpuUsage();
		const facesBefore = mesh.indices.length / 3;
		const r = applyStep(mesh, step);
		const cpu = process.cpuUsage(c0);
		mesh = r.mesh;
		rows.push({ step: step.op, ms: performance.now() - w0, cpuMs: (cpu.user + cpu.system) / 1000, facesBefore, facesAfter: mesh.indices.length / 3, what: summary(step.op, r.counts) });
	}
	const recipeMs = performance.now() - t0;
	const recipeCpuMs = rows.reduce((s, r) => s + r.cpuMs, 0);
	const t1 = performance.now(), c1 = process.cpuUsage();
	const dev = meshDeviation(mesh, clean, { symmetric: true });
	const deviationMs = performance.now() - t1;
	const devCpu = process.cpuUsage(c1);
	const deviationCpuMs = (devCpu.user + devCpu.system) / 1000;
	const rep = inspectMesh(asParsed(mesh), { skipSelfIntersections: true, rasterCells: 64 });
	const peakRssMb = process.resourceUsage().maxRSS / 1024;
	return {
		triangles: broken.indices.length / 3,
		cell,
		rows,
		recipeMs,
		recipeCpuMs,
		deviationMs,
		deviationCpuMs,
		hausdorff: dev.hausdorff,
		peakRssMb,
		closed: rep.boundaryEdges === 0 && rep.consistentlyOriented && rep.volume > 0 && rep.nonManifoldEdges === 0
	};
}

export function printRepairBench(r: RepairBenchResult): void {
	const pad = (s: string, n: number) => s.padEnd(n);
	const num = (x: number) => x.toFixed(0).padStart(8);
	console.log(`\nrepair: standard recipe on a tow body, ${r.triangles.toLocaleString('en-US')} triangles, cell ${r.cell.toPrecision(3)}`);
	console.log(`${pad('step', 30)}${'wall ms'.padStart(8)}${'cpu ms'.padStart(8)}  ${'faces in'.padStart(10)}  ${'faces out'.padStart(10)}  what`);
	for (const row of r.rows) {
		console.log(`${pad(row.step, 30)}${num(row.ms)}${num(row.cpuMs)}  ${String(row.facesBefore).padStart(10)}  ${String(row.facesAfter).padStart(10)}  ${row.what}`);
	}
	console.log(`${pad('whole recipe', 30)}${num(r.recipeMs)}${num(r.recipeCpuMs)}`);
	console.log(`${pad('deviation (symmetric)', 30)}${num(r.deviationMs)}${num(r.deviationCpuMs)}  Hausdorff to the clean mesh ${r.hausdorff.toPrecision(3)} (${(r.hausdorff / r.cell).toFixed(2)} cells)`);
	console.log(`result closed, outward and manifold: ${r.closed ? 'yes' : 'NO'}; peak RSS ${r.peakRssMb.toFixed(0)} MB (mesh generation included); load average ${os.loadavg()[0].toFixed(1)} on ${os.cpus().length} cores`);
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
	const target = Number(process.env.BENCH_REPAIR_TRIS ?? 1_000_000);
	if (!(target >= 1000 && target <= 20_000_000)) throw new Error(`BENCH_REPAIR_TRIS must be from 1000 to 20000000, got ${process.env.BENCH_REPAIR_TRIS}`);
	printRepairBench(runRepairBench(target));
}
