/**
 * Reader timings on a 1M-triangle torus grid (1000 × 500 vertices): binary STL (parse + weld),
 * binary PLY (own reader vs @loaders.gl/ply), OBJ and ASCII PLY. Run: npx tsx scripts/bench-readers.ts
 * Prints wall and process-CPU minimum over a few runs; on a loaded machine trust the CPU column.
 */
import { PLYLoader } from '@loaders.gl/ply';
import { readMesh } from '../src/lib/mesh/read';
import { writeBinaryStl, writeObj, writePly } from '../src/lib/mesh/write';

function torus(nu: number, nv: number, decimals?: number) {
	const positions = new Float64Array(3 * nu * nv);
	for (let i = 0; i < nu; i++) {
		for (let j = 0; j < nv; j++) {
			const u = (2 * Math.PI * i) / nu, v = (2 * Math.PI * j) / nv, k = 3 * (i * nv + j);
			positions[k] = (3 + Math.cos(v)) * Math.cos(u);
			positions[k + 1] = (3 + Math.cos(v)) * Math.sin(u);
			positions[k + 2] = Math.sin(v);
		}
	}
	for (let i = 0; i < positions.length; i++) {
		positions[i] = decimals === undefined ? Math.fround(positions[i]) : Math.round(positions[i] * 10 ** decimals) / 10 ** decimals;
	}
	const indices = new Uint32Array(6 * nu * nv);
	let o = 0;
	for (let i = 0; i < nu; i++) {
		for (let j = 0; j < nv; j++) {
			const a = i * nv + j, b = ((i + 1) % nu) * nv + j, c = ((i + 1) % nu) * nv + ((j + 1) % nv), d = i * nv + ((j + 1) % nv);
			indices.set([a, b, c, a, c, d], o);
			o += 6;
		}
	}
	return { positions, indices };
}

function time(label: string, f: () => unknown, reps = 5): void {
	f();
	let wall = Infinity, cpu = Infinity;
	for (let r = 0; r < reps; r++) {
		const c0 = process.cpuUsage();
		const t0 = performance.now();
		f();
		wall = Math.min(wall, performance.now() - t0);
		const c = process.cpuUsage(c0);
		cpu = Math.min(cpu, (c.user + c.system) / 1000);
	}
	console.log(`${label.padEnd(44)} wall ${wall.toFixed(0).padStart(5)} ms   cpu ${cpu.toFixed(0).padStart(5)} ms`);
}

const mesh = torus(1000, 500);
const mesh6 = torus(1000, 500, 6);
const stl = writeBinaryStl(mesh);
const ply = writePly(mesh, 'binary-le');
const plyBuffer = ply.buffer.slice(ply.byteOffset, ply.byteOffset + ply.byteLength) as ArrayBuffer;
const obj = writeObj(mesh6);
const plyAscii = writePly(mesh6, 'ascii');
console.log(`1,000,000 triangles, 500,000 vertices; files: STL ${(stl.length / 1e6).toFixed(0)} MB, PLY ${(ply.length / 1e6).toFixed(0)} MB, OBJ ${(obj.length / 1e6).toFixed(0)} MB`);
time('binary STL: readMesh (parse + weld)', () => readMesh(stl, 'bench.stl'));
time('binary PLY: readMesh', () => readMesh(ply, 'bench.ply'));
time('binary PLY: @loaders.gl/ply parseSync', () => PLYLoader.parseSync!(plyBuffer, {}), 3);
time('OBJ (6 decimals): readMesh', () => readMesh(obj, 'bench.obj'), 3);
time('ASCII PLY (6 decimals): readMesh', () => readMesh(plyAscii, 'bench.ply'), 3);
