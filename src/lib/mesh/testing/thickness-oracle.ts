/**
 * Brute-force oracle for thickness.ts: the same sampling, neighbourhood and facing rules, written
 * plainly, testing every face against every ray (O(F²), tests only, no BVH).
 */
import { THICKNESS_FACING_MAX_DEG } from '../thickness';
import type { MeshBuffers } from '../types';

type V3 = [number, number, number];
const sub = (a: V3, b: V3): V3 => [a[0] - b[0], a[1] - b[1], a[2] - b[2]];
const cross = (a: V3, b: V3): V3 => [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
const dot = (a: V3, b: V3) => a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
const len = (a: V3) => Math.sqrt(dot(a, a));

export function faceDistancesBruteForce(mesh: MeshBuffers, direction: 'inward' | 'outward', cellSize: number): { value: Float32Array; hitFace: Int32Array } {
	const p = mesh.positions, idx = mesh.indices;
	const n = idx.length / 3;
	const vert = (v: number): V3 => [p[3 * v], p[3 * v + 1], p[3 * v + 2]];
	let lo: V3 = [Infinity, Infinity, Infinity], hi: V3 = [-Infinity, -Infinity, -Infinity];
	for (let v = 0; v < p.length / 3; v++) {
		if (!idx.includes(v)) continue;
		const q = vert(v);
		lo = [Math.min(lo[0], q[0]), Math.min(lo[1], q[1]), Math.min(lo[2], q[2])];
		hi = [Math.max(hi[0], q[0]), Math.max(hi[1], q[1]), Math.max(hi[2], q[2])];
	}
	const tMin = 1e-9 * len(sub(hi, lo));
	const minCos = Math.cos((THICKNESS_FACING_MAX_DEG * Math.PI) / 180);
	const sense = direction === 'inward' ? 1 : -1;
	const value = new Float32Array(n).fill(Infinity), hitFace = new Int32Array(n).fill(-1);
	for (let t = 0; t < n; t++) {
		const ids = [idx[3 * t], idx[3 * t + 1], idx[3 * t + 2]];
		const [a, b, c] = ids.map(vert);
		const nr = cross(sub(b, a), sub(c, a));
		if (!(len(nr) > 0)) continue;
		const s = direction === 'inward' ? -1 / len(nr) : 1 / len(nr);
		const d: V3 = [nr[0] * s, nr[1] * s, nr[2] * s];
		const g: V3 = [(a[0] + b[0] + c[0]) / 3, (a[1] + b[1] + c[1]) / 3, (a[2] + b[2] + c[2]) / 3];
		const samples: V3[] = [g];
		if (Math.max(len(sub(b, a)), len(sub(c, b)), len(sub(a, c))) > cellSize) for (const v of [a, b, c]) samples.push([(g[0] + v[0]) / 2, (g[1] + v[1]) / 2, (g[2] + v[2]) / 2]);
		for (const o of samples) {
			for (let u = 0; u < n; u++) {
				const uid = [idx[3 * u], idx[3 * u + 1], idx[3 * u + 2]];
				if (uid.some((x) => ids.includes(x))) continue;
				const [A, B, C] = uid.map(vert);
				const e1 = sub(B, A), e2 = sub(C, A);
				const pv = cross(d, e2);
				const det = dot(e1, pv);
				if (det === 0) continue;
				const q = sub(o, A);
				const bu = dot(q, pv) / det;
				if (bu < 0 || bu > 1) continue;
				const r = cross(q, e1);
				const bv = dot(d, r) / det;
				if (bv < 0 || bu + bv > 1) continue;
				const dist = dot(e2, r) / det;
				if (dist < tMin) continue;
				const nu = cross(e1, e2);
				if ((sense * dot(nu, d)) / len(nu) < minCos) continue;
				if (dist < value[t] || (Math.fround(dist) === value[t] && hitFace[t] < 0)) {
					value[t] = dist;
					hitFace[t] = u;
				}
			}
		}
	}
	return { value, hitFace };
}
