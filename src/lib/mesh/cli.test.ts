import { afterAll, describe, expect, it } from 'vitest';
import { spawn, spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { writeBinaryStl } from './write';
import { concat, unitCube, withoutFaces } from './testing/test-meshes';

const cli = fileURLToPath(new URL('./cli.ts', import.meta.url));
const tsx = fileURLToPath(new URL('../../../node_modules/.bin/tsx', import.meta.url));
const run = (...args: string[]) => spawnSync(tsx, [cli, ...args], { encoding: 'utf8', timeout: 60_000 });
const dir = mkdtempSync(join(tmpdir(), 'shellgate-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('inspect command', () => {
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
		const child = spawn(tsx, [cli, file, '--json', '--no-self-intersections'], { stdio: ['ignore', 'pipe', 'pipe'] });
		const chunks: Buffer[] = [];
		const out = child.stdout;
		out.pause();
		// A deliberately slow reader: take one chunk, then wait before asking for the next.
		const pump = () => {
			const c = out.read() as Buffer | null;
			if (c) chunks.push(c);
			setTimeout(pump, c ? 5 : 20);
		};
		const timer = setTimeout(pump, 500);
		const code = await new Promise<number | null>((resolve) => child.on('close', (c) => resolve(c)));
		clearTimeout(timer);
		for (let c = out.read() as Buffer | null; c; c = out.read() as Buffer | null) chunks.push(c);
		const text = Buffer.concat(chunks).toString('utf8');
		expect(code).toBe(0);
		expect(text.length).toBeGreaterThan(1_000_000);
		const report = JSON.parse(text);
		expect(report.components).toBe(4000);
		expect(report.boundaryLoops).toBe(4000);
	}, 120_000);
});
