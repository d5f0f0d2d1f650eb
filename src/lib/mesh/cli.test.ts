import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync, spawn, spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { writeBinaryStl } from './write';
import { inspectFileNode } from './inspect-node';
import { concat, icosphere, unitCube, withoutFaces } from './testing/test-meshes';

// The command line as it ships: plain JavaScript built ahead (scripts/build-cli.mjs), run by node.
const builder = fileURLToPath(new URL('../../../scripts/build-cli.mjs', import.meta.url));
const cli = fileURLToPath(new URL('../../../dist-cli/cli.js', import.meta.url));
const run = (...args: string[]) => spawnSync(process.execPath, [cli, ...args], { encoding: 'utf8', timeout: 60_000 });
const dir = mkdtempSync(join(tmpdir(), 'shellgate-cli-'));
beforeAll(() => {
	execFileSync(process.execPath, [builder, '--if-stale'], { stdio: 'inherit' });
}, 60_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** The JSON text with its one `timings` object emptied: the only part that may differ between runs. */
const withoutTimings = (json: string) => json.replace(/"timings":\{[^{}]*\}/, '"timings":{}');

describe('inspect command', () => {
	it('gives byte for byte the JSON of the engine called in this process, timings aside, on one thread and on workers', async () => {
		// Two overlapping spheres (self-intersections) and an open cube (a hole, a second shell).
		const a = icosphere(1), b = icosphere(1);
		for (let i = 0; i < b.positions.length; i += 3) b.positions[i] += 1.2;
		const file = join(dir, 'two-pods-and-a-box.stl');
		writeFileSync(file, writeBinaryStl(concat(a, b, withoutFaces(unitCube([4, 0, 0]), [3]))));
		for (const args of [['--threads', '0'], ['--threads', '2', '--worker-min-faces', '0']]) {
			const r = run(file, '--json', '--flow', '0,1,1', ...args);
			expect(r.status, r.stderr).toBe(0);
			const threads = Number(args[1]);
			const inProcess = await inspectFileNode(readFileSync(file), file, { flowDirection: [0, 1, 1], threads, workerMinFaces: args.length > 2 ? 0 : undefined });
			// Under the sample cap, the sample is every pair in order, whichever thread found it.
			expect(inProcess.selfIntersectingPairs).toBeGreaterThan(0);
			expect(inProcess.selfIntersectingPairs).toBeLessThan(100);
			expect(withoutTimings(r.stdout)).toBe(withoutTimings(`${JSON.stringify(inProcess)}\n`));
		}
	}, 60_000);

	it('prints one JSON report and exits 0 for a readable file', () => {
		const file = join(dir, 'pod-open.stl');
		writeFileSync(file, writeBinaryStl(withoutFaces(unitCube(), [0])));
		const r = run(file, '--json', '--threads', '1');
		expect(r.status).toBe(0);
		const report = JSON.parse(r.stdout);
		expect(report.boundaryLoops).toBe(1);
		expect(report.selfIntersectingPairs).toBe(0);
		expect(r.stdout.trim().split('\n')).toHaveLength(1);
	}, 60_000);

	it('prints a readable summary without --json', () => {
		const file = join(dir, 'pod.stl');
		writeFileSync(file, writeBinaryStl(unitCube()));
		const r = run(file, '--no-self-intersections');
		expect(r.status).toBe(0);
		expect(r.stdout).toMatch(/watertight: yes/);
		expect(r.stdout).toMatch(/genus 0/);
	}, 60_000);

	it('exits 2 with the reason on stderr when the file is missing or is no mesh', () => {
		const missing = run(join(dir, 'nope.stl'));
		expect(missing.status).toBe(2);
		expect(missing.stderr).toMatch(/no such file/);
		const junk = join(dir, 'notes.txt');
		writeFileSync(junk, 'not a mesh');
		const bad = run(junk, '--json');
		expect(bad.status).toBe(2);
		expect(bad.stdout).toBe('');
		expect(bad.stderr).toMatch(/notes\.txt/);
	}, 60_000);

	it('exits 2 on a malformed option', () => {
		const r = run(join(dir, 'pod.stl'), '--flow', '1,0');
		expect(r.status).toBe(2);
		expect(r.stderr).toMatch(/--flow/);
	}, 60_000);

	it('hands a report over 1 MB whole to a slow pipe reader and exits 0', async () => {
		// 4000 separate open cubes: one shell entry and one hole each, several MB of JSON.
		const cubes = [];
		for (let i = 0; i < 4000; i++) cubes.push(withoutFaces(unitCube([2 * (i % 60), 2 * Math.floor(i / 60), 0]), [0]));
		const file = join(dir, 'many-pods.stl');
		writeFileSync(file, writeBinaryStl(concat(...cubes)));
		const child = spawn(process.execPath, [cli, file, '--json', '--no-self-intersections'], { stdio: ['ignore', 'pipe', 'pipe'] });
		const chunks: Buffer[] = [];
		const out = child.stdout;
		// A deliberately slow reader: nothing for half a second, then a pause after every chunk.
		out.pause();
		const ended = new Promise<void>((resolve) => out.once('end', () => resolve()));
		out.on('data', (c: Buffer) => {
			chunks.push(c);
			out.pause();
			setTimeout(() => out.resume(), 5);
		});
		setTimeout(() => out.resume(), 500);
		const code = await new Promise<number | null>((resolve) => child.on('exit', (c) => resolve(c)));
		await ended;
		const text = Buffer.concat(chunks).toString('utf8');
		expect(code).toBe(0);
		expect(text.length).toBeGreaterThan(1_000_000);
		const report = JSON.parse(text);
		expect(report.components).toBe(4000);
		expect(report.boundaryLoops).toBe(4000);
	}, 120_000);
});
