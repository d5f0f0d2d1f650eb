// Demo meshes for `npm start`: marching-cubes surfaces of the team's parts, some with the defects
// implicit-surface generators typically leave. Deterministic (fixed seeds), a few thousand faces each.
import { marchingCubes, gridFor } from '../src/lib/mesh/testing/marching-cubes';
import { keelBulb, sensorPod, sphere, torus, towBody, type ImplicitShape } from '../src/lib/mesh/testing/implicit-shapes';
import type { MeshBuffers } from '../src/lib/mesh/types';
import { writeBinaryStl, writeObj, writePly } from '../src/lib/mesh/write';

function mesh(s: ImplicitShape, cell: number, clipMaxX?: number): MeshBuffers {
	const max: [number, number, number] = [clipMaxX ?? s.max[0], s.max[1], s.max[2]];
	const g = gridFor(s.min, max, cell);
	if (clipMaxX !== undefined) g.cells[0] = Math.ceil((clipMaxX - g.min[0]) / cell);
	return marchingCubes(s.field, g);
}

function scaled(m: MeshBuffers, k: number, offset: [number, number, number] = [0, 0, 0]): MeshBuffers {
	const p = new Float64Array(m.positions.length);
	for (let i = 0; i < p.length; i++) p[i] = m.positions[i] * k + offset[i % 3];
	return { positions: p, indices: m.indices };
}

function merge(a: MeshBuffers, b: MeshBuffers): MeshBuffers {
	const positions = new Float64Array(a.positions.length + b.positions.length);
	positions.set(a.positions);
	positions.set(b.positions, a.positions.length);
	const off = a.positions.length / 3;
	const indices = new Uint32Array(a.indices.length + b.indices.length);
	indices.set(a.indices);
	for (let i = 0; i < b.indices.length; i++) indices[a.indices.length + i] = b.indices[i] + off;
	return { positions, indices };
}

/** Reverses the winding of the faces in the first `share` of the length along x: an exporter's slip. */
function flipPatch(m: MeshBuffers, share: number): MeshBuffers {
	const idx = m.indices.slice();
	const p = m.positions;
	let lo = Infinity, hi = -Infinity;
	for (let i = 0; i < p.length; i += 3) (lo = Math.min(lo, p[i])), (hi = Math.max(hi, p[i]));
	const cut = lo + share * (hi - lo);
	for (let t = 0; t < idx.length; t += 3) {
		const cx = (p[3 * idx[t]] + p[3 * idx[t + 1]] + p[3 * idx[t + 2]]) / 3;
		if (cx < cut) [idx[t + 1], idx[t + 2]] = [idx[t + 2], idx[t + 1]];
	}
	return { positions: p, indices: idx };
}

export interface DemoUpload {
	project: string;
	part: string;
	fileName: string;
	bytes: Uint8Array;
	note: string;
}

export function demoUploads(): DemoUpload[] {
	const pod = sensorPod(3);
	const tow = towBody(1);
	const bulb = keelBulb(2);
	// Sensor pods in mm: the generator works in decimetres, so scale by 100.
	const podClean = scaled(mesh(pod, 0.05), 100);
	const podClipped = scaled(mesh(pod, 0.05, pod.max[0] - 0.15), 100);
	// Tow bodies in mm (×250): one with two floating specks left by the iso-surface extraction.
	const towClean = scaled(mesh(tow, 0.06), 250);
	const speck = scaled(mesh(sphere(0.04), 0.02), 250, [250 * 0.3, 250 * 0.9, 0]);
	const speck2 = scaled(mesh(sphere(0.03), 0.015), 250, [-250 * 0.4, -250 * 0.8, 250 * 0.2]);
	const towSpecks = merge(merge(towClean, speck), speck2);
	const ring = scaled(mesh(torus(1, 0.3), 0.06), 120);
	// Keel bulb in metres, with a patch of flipped faces at the nose.
	const bulbFlipped = flipPatch(mesh(bulb, 0.05), 0.08);
	return [
		{ project: 'sensor-pods', part: 'side-scan-pod', fileName: 'side-scan-pod-v3.stl', bytes: writeBinaryStl(podClean), note: 'optimiser run 7, iso-level 0' },
		{ project: 'sensor-pods', part: 'ctd-pod', fileName: 'ctd-pod-run12.ply', bytes: writePly(podClipped, 'binary-le'), note: 'SDF net export, sampling box 0.9 m' },
		{ project: 'tow-bodies', part: 'mag-tow-body', fileName: 'mag-tow-body-b.stl', bytes: writeBinaryStl(towSpecks), note: 'marching cubes at 15 mm' },
		{ project: 'tow-bodies', part: 'ring-wing-body', fileName: 'ring-wing.obj', bytes: writeObj(ring, [{ name: 'ring_wing', firstFace: 0, faceCount: ring.indices.length / 3 }]), note: 'genus 1 on purpose' },
		{ project: 'keel-bulbs', part: 'keel-bulb-a', fileName: 'keel-bulb-a-iter40.stl', bytes: writeBinaryStl(bulbFlipped), note: 'optimiser iteration 40' }
	];
}
