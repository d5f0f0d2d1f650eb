/**
 * Part of `npm run bench`: small meshes (a 12-face cube up to a 5,120-face icosphere) through the
 * built command line, each in a fresh process (`node dist-cli/cli.js FILE --json`), median of
 * BENCH_SMALL_RUNS (7) runs per stage, read from the report's timings. Target: no stage over 20 ms
 * on the cube.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, writeFileSync } from 'node:fs';
import { loadavg } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { SLAB_MAX_FACES } from '../src/lib/mesh/projection';
import { icosphere, torus, unitCube } from '../src/lib/mesh/testing/test-meshes';
import type { MeshBuffers } from '../src/lib/mesh/types';
import { writeBinaryStl } from '../src/lib/mesh/write';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const outDir = join(root, 'bench-out');
const cli = join(root, 'dist-cli/cli.js');
const runs = Number(process.env.BENCH_SMALL_RUNS ?? 7);

const meshes: [string, MeshBuffers][] = [
	['cube', unitCube()],
	['icosphere-80', icosphere(1)],
	['torus-192', torus(12, 8)],
	['icosphere-320', icosphere(2)],
	['torus-576', torus(24, 12)],
	['icosphere-1280', icosphere(3)],
	['torus-2304', torus(48, 24)],
	['icosphere-5120', icosphere(4)]
];

if (!existsSync(cli)) throw new Error('dist-cli/cli.js is missing: run node scripts/build-cli.mjs');
mkdirSync(outDir, { recursive: true });
const median = (v: number[]) => [...v].sort((a, b) => a - b)[v.length >> 1];
const fmt = (ms: number) => (ms >= 100 ? ms.toFixed(0) : ms.toFixed(1));
console.log(`frontal area by slabs up to ${SLAB_MAX_FACES.toLocaleString('en')} faces, raster above`);
console.log('| mesh | faces | frontal-area method | load avg | stages, median ms |');
console.log('|---|---:|---|---:|---|');
let cubeWorst = Infinity;
for (const [name, m] of meshes) {
	const file = join(outDir, `small-${name}.stl`);
	writeFileSync(file, writeBinaryStl(m));
	const load = loadavg()[0];
	const stages: Record<string, number[]> = {};
	let method = '';
	for (let i = 0; i < runs; i++) {
		const res = spawnSync(process.execPath, [cli, file, '--json'], { encoding: 'utf8', maxBuffer: 1 << 24 });
		if (res.status !== 0) throw new Error(`command line on ${file} failed:\n${res.stderr}`);
		const report = JSON.parse(res.stdout);
		{ const text = String(report.projectedArea.flow.method); method = text.includes('exact union') ? 'union' : text.includes('slabs') ? 'slabs' : 'raster'; }
		for (const [k, v] of Object.entries(report.timings as Record<string, number>)) (stages[k] ??= []).push(v);
	}
	const med = Object.fromEntries(Object.entries(stages).map(([k, v]) => [k, median(v)]));
	if (name === 'cube') cubeWorst = Math.max(...Object.entries(med).filter(([k]) => k !== 'total' && k !== 'selfIntersectionsWait').map(([, v]) => v));
	console.log(`| ${name} | ${(m.indices.length / 3).toLocaleString('en')} | ${method} | ${load.toFixed(1)} | ${Object.entries(med).map(([k, v]) => `${k} ${fmt(v)}`).join(', ')} |`);
}
console.log(`cube, slowest stage cold ${fmt(cubeWorst)} ms (target < 20 ms) ${cubeWorst < 20 ? 'PASS' : 'FAIL'}`);
