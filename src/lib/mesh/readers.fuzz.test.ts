// Bad input for every reader: each case must end in a report or a MeshReadError, within a time and a
// memory bound. read.test.ts already throws random bytes and small edits at the fixtures; this file adds
// truncation at every offset, bit flips, huge declared counts and absurd lines, on fixtures and on
// generated meshes in every format the writers produce.
import { readdirSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { inspectBytes } from './inspect';
import { gridFor, marchingCubes } from './testing/marching-cubes';
import { sphere, torus } from './testing/implicit-shapes';
import { MeshReadError } from './types';
import { writeAsciiStl, writeBinaryStl, writeObj, writePly } from './write';

const FIXTURE_DIR = new URL('../../../fixtures/', import.meta.url);
const fixtures = readdirSync(FIXTURE_DIR)
	.filter((f) => /\.(stl|ply|obj)$/.test(f))
	.map((f) => ({ name: f, bytes: new Uint8Array(readFileSync(new URL(f, FIXTURE_DIR))) }));

/** Small generated meshes (a coarse sphere and torus) written by every writer. */
function generated(): { name: string; bytes: Uint8Array }[] {
	const out: { name: string; bytes: Uint8Array }[] = [];
	for (const s of [sphere(1), torus(1, 0.4)]) {
		const m = marchingCubes(s.field, gridFor(s.min, s.max, 0.7));
		out.push(
			{ name: `${s.name}.stl`, bytes: writeBinaryStl(m) },
			{ name: `${s.name}-ascii.stl`, bytes: writeAsciiStl(m) },
			{ name: `${s.name}.ply`, bytes: writePly(m, 'ascii') },
			{ name: `${s.name}-le.ply`, bytes: writePly(m, 'binary-le') },
			{ name: `${s.name}-be.ply`, bytes: writePly(m, 'binary-be') },
			{ name: `${s.name}.obj`, bytes: writeObj(m) }
		);
	}
	return out;
}

// Bounds per case. Generous on purpose (the machine is shared and loaded): they catch hangs and
// runaway allocation, not slowness. Speed is measured in `npm run bench`.
const CASE_TIME_LIMIT_MS = 5_000;
// Memory is the JS heap plus ArrayBuffer storage (where the readers' typed arrays live, outside
// heapUsed), compared before and after each case: it catches memory a case keeps, not its peak.
const CASE_MEMORY_LIMIT_MB = 256;
const usedMemory = () => {
	const m = process.memoryUsage();
	return m.heapUsed + m.arrayBuffers;
};

interface Tally {
	cases: number;
	reports: number;
	refused: number;
	slowestMs: number;
	maxMemoryGrowthMb: number;
}
const tally: Tally = { cases: 0, reports: 0, refused: 0, slowestMs: 0, maxMemoryGrowthMb: 0 };

/** One case: the file must give a report or a MeshReadError, nothing else, within the bounds. */
function runCase(bytes: Uint8Array, fileName: string, what: string): 'report' | 'refused' {
	const mem0 = usedMemory();
	const t0 = performance.now();
	let outcome: 'report' | 'refused';
	try {
		// Self-intersections are skipped for speed: their input is the same validated buffers.
		inspectBytes(bytes, fileName, { skipSelfIntersections: true, maxFaces: 2_000_000 });
		outcome = 'report';
	} catch (e) {
		if (!(e instanceof MeshReadError)) throw new Error(`${what} (${fileName}, ${bytes.length} bytes) threw ${(e as Error)?.name}: ${(e as Error)?.message}`);
		expect(e.message.length).toBeGreaterThan(0);
		outcome = 'refused';
	}
	const ms = performance.now() - t0;
	const grownMb = (usedMemory() - mem0) / 1024 / 1024;
	if (ms > CASE_TIME_LIMIT_MS) throw new Error(`${what} (${fileName}) took ${ms.toFixed(0)} ms`);
	if (grownMb > CASE_MEMORY_LIMIT_MB) throw new Error(`${what} (${fileName}) grew heap + array buffers by ${grownMb.toFixed(0)} MB`);
	tally.cases++;
	if (outcome === 'report') tally.reports++;
	else tally.refused++;
	tally.slowestMs = Math.max(tally.slowestMs, ms);
	tally.maxMemoryGrowthMb = Math.max(tally.maxMemoryGrowthMb, grownMb);
	return outcome;
}

const ascii = (s: string) => new TextEncoder().encode(s);

describe('reader fuzzing', () => {
	const bases = [...fixtures, ...generated()];

	it('truncating every fixture at every offset (at 4,000 spread offsets above 16 KB) gives a report or a reader error', () => {
		for (const f of fixtures) {
			const step = f.bytes.length <= 16_384 ? 1 : Math.ceil(f.bytes.length / 4000);
			for (let n = 0; n <= f.bytes.length; n += step) runCase(f.bytes.subarray(0, n), f.name, `truncated at ${n}`);
			runCase(f.bytes.subarray(0, f.bytes.length - 1), f.name, 'last byte cut');
		}
	});

	it('truncating generated meshes in every format at 200 spread offsets gives a report or a reader error', () => {
		for (const g of generated()) {
			const step = Math.max(1, Math.floor(g.bytes.length / 200));
			for (let n = 0; n <= g.bytes.length; n += step) runCase(g.bytes.subarray(0, n), g.name, `truncated at ${n}`);
		}
	});

	it('flipped bits and overwritten bytes never crash a reader (fast-check, seed 7)', () => {
		fc.assert(
			fc.property(
				fc.integer({ min: 0, max: bases.length - 1 }),
				fc.array(fc.tuple(fc.nat(), fc.integer({ min: 0, max: 7 })), { minLength: 1, maxLength: 12 }),
				fc.array(fc.tuple(fc.nat(), fc.integer({ min: 0, max: 255 })), { maxLength: 4 }),
				(which, flips, writes) => {
					const b = bases[which].bytes.slice();
					for (const [at, bit] of flips) b[at % b.length] ^= 1 << bit;
					for (const [at, v] of writes) b[at % b.length] = v;
					runCase(b, bases[which].name, 'flipped');
				}
			),
			{ seed: 7, numRuns: 1500 }
		);
	});

	it('random bytes under every name, and random text, never crash a reader (fast-check, seed 11)', () => {
		fc.assert(
			fc.property(fc.uint8Array({ maxLength: 2000 }), fc.constantFrom('x.stl', 'x.ply', 'x.obj', 'x'), (b, name) => {
				runCase(b, name, 'random bytes');
			}),
			{ seed: 11, numRuns: 800 }
		);
		const words = fc.constantFrom('solid', 'facet', 'normal', 'outer', 'loop', 'vertex', 'endloop', 'endfacet', 'endsolid', 'v', 'f', 'o', 'g', 'vn', 'vt', '1', '-1', '0', '3', '1e308', 'nan', 'inf', '//', '/', '\n', '\r\n', ' ', 'ply', 'format', 'ascii', 'binary_little_endian', '1.0', 'element', 'face', 'property', 'list', 'uchar', 'int', 'float', 'x', 'y', 'z', 'vertex_indices', 'end_header');
		fc.assert(
			fc.property(fc.array(words, { maxLength: 300 }), fc.constantFrom('x.stl', 'x.ply', 'x.obj'), (ws, name) => {
				runCase(ascii(ws.join(' ')), name, 'keyword soup');
			}),
			{ seed: 11, numRuns: 800 }
		);
	});

	it('huge declared counts are refused before anything that size is allocated', () => {
		const stl = fixtures.find((f) => f.name === 'cube-closed.stl')!.bytes;
		for (const count of [0xffffffff, 0x7fffffff, 20_000_001, 1_000_000, 13, 0]) {
			const b = stl.slice();
			new DataView(b.buffer).setUint32(80, count, true);
			runCase(b, 'pod.stl', `STL count ${count}`);
		}
		// A binary STL header claiming a billion faces with no body at all.
		const bare = new Uint8Array(84);
		new DataView(bare.buffer).setUint32(80, 1_000_000_000, true);
		expect(runCase(bare, 'pod.stl', 'bare STL header')).toBe('refused');
		const plyHead = (v: string, f: string, fmt = 'ascii') =>
			`ply\nformat ${fmt} 1.0\nelement vertex ${v}\nproperty float x\nproperty float y\nproperty float z\nelement face ${f}\nproperty list uchar int vertex_indices\nend_header\n0 0 0\n1 0 0\n0 1 0\n3 0 1 2\n`;
		for (const fmt of ['ascii', 'binary_little_endian', 'binary_big_endian']) {
			for (const [v, f] of [['4294967295', '1'], ['3', '4294967295'], ['99999999999999999999', '1'], ['3', '1e9'], ['-1', '1'], ['3', '0x10'], ['2000000000', '2000000000']]) {
				expect(runCase(ascii(plyHead(v, f, fmt)), 'pod.ply', `PLY ${fmt} ${v}/${f}`)).toBe('refused');
			}
		}
		// A face list claiming 255 corners, and a list count type wide enough to claim billions.
		runCase(ascii('ply\nformat ascii 1.0\nelement vertex 3\nproperty float x\nproperty float y\nproperty float z\nelement face 1\nproperty list uchar int vertex_indices\nend_header\n0 0 0\n1 0 0\n0 1 0\n255 0 1 2\n'), 'pod.ply', 'PLY long list');
		runCase(ascii('ply\nformat ascii 1.0\nelement vertex 3\nproperty float x\nproperty float y\nproperty float z\nelement face 1\nproperty list uint int vertex_indices\nend_header\n0 0 0\n1 0 0\n0 1 0\n4000000000 0 1 2\n'), 'pod.ply', 'PLY list count 4e9');
		// OBJ faces pointing far outside the vertex list, and negative indices beyond the start.
		for (const f of ['f 1 2 4294967296', 'f -1 -2 -99999999999', 'f 1/1/1 2//2 3/3', 'f 0 1 2', 'f 1 2']) runCase(ascii(`v 0 0 0\nv 1 0 0\nv 0 1 0\n${f}\n`), 'pod.obj', `OBJ ${f}`);
	});

	it('absurdly long lines, deep slash nesting and a million-corner polygon end within the bounds', () => {
		const long = 'v ' + '1'.repeat(4_000_000) + ' 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n';
		runCase(ascii(long), 'pod.obj', 'OBJ 4 MB number');
		runCase(ascii('solid ' + 'x'.repeat(3_000_000) + '\nendsolid\n'), 'pod.stl', 'STL 3 MB name');
		runCase(ascii('ply\ncomment ' + 'c'.repeat(3_000_000) + '\nformat ascii 1.0\nend_header\n'), 'pod.ply', 'PLY 3 MB comment');
		runCase(ascii('v 0 0 0\nv 1 0 0\nv 0 1 0\nf ' + '1/'.repeat(200_000) + '1 2 3\n'), 'pod.obj', 'OBJ deep slashes');
		runCase(ascii('ply\nformat ascii 1.0\n' + 'element e 1\n'.repeat(100_000) + 'end_header\n'), 'pod.ply', 'PLY 100k elements');
		const verts = Array.from({ length: 1000 }, (_, i) => `v ${Math.cos(i / 159)} ${Math.sin(i / 159)} 0`).join('\n');
		runCase(ascii(verts + '\nf ' + Array.from({ length: 1_000_000 }, (_, i) => (i % 1000) + 1).join(' ') + '\n'), 'pod.obj', 'OBJ million-corner polygon');
		runCase(new Uint8Array(8 * 1024 * 1024).fill(0x0a), 'pod.obj', 'OBJ 8 MB of newlines');
		runCase(new Uint8Array(8 * 1024 * 1024), 'pod.stl', 'STL 8 MB of zeros');
	});

	it('prints the tally', () => {
		console.log(
			`[fuzz] readers: ${tally.cases} cases, ${tally.reports} reports, ${tally.refused} refused with a reader error, 0 crashes; slowest ${tally.slowestMs.toFixed(0)} ms (limit ${CASE_TIME_LIMIT_MS}), largest growth of heap + array buffers ${tally.maxMemoryGrowthMb.toFixed(0)} MB (limit ${CASE_MEMORY_LIMIT_MB})`
		);
		expect(tally.cases).toBeGreaterThan(5000);
	});
});
