/**
 * Brute-force oracle for the self-intersection count (self-intersect.ts), independent of the
 * production test: the separating axis theorem on small integer coordinates, where every product
 * below is exact in float64 (integer coordinates up to 2^11 in magnitude: the largest terms are
 * about 96·c⁴ < 2^53). For closed convex sets the Minkowski difference A ⊕ (−B) is a polytope
 * whose facet normals are among the axes tried, so "no strictly separating axis" is exactly "the
 * closed sets meet". O(n²) over all face pairs.
 */
import type { MeshBuffers } from '../types';

type V = [number, number, number];
const sub = (a: V, b: V): V => [a[0] - b[0], a[1] - b[1], a[2] - b[2]];
const cross = (a: V, b: V): V => [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
const dot = (a: V, b: V) => a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
const isZero = (a: V) => a[0] === 0 && a[1] === 0 && a[2] === 0;

function separated(axes: V[], p: V[], q: V[]): boolean {
	for (const ax of axes) {
		if (isZero(ax)) continue;
		const pp = p.map((v) => dot(ax, v)), qq = q.map((v) => dot(ax, v));
		if (Math.max(...pp) < Math.min(...qq) || Math.max(...qq) < Math.min(...pp)) return true;
	}
	return false;
}
function edgesOf(p: V[]): V[] {
	return p.length === 2 ? [sub(p[1], p[0])] : [sub(p[1], p[0]), sub(p[2], p[1]), sub(p[0], p[2])];
}
/** Closed convex hulls of p and q (each a triangle or a segment) meet. */
function meets(p: V[], q: V[]): boolean {
	const ep = edgesOf(p), eq = edgesOf(q);
	const axes: V[] = [];
	const normals: V[] = [];
	if (p.length === 3) normals.push(cross(ep[0], ep[1]));
	if (q.length === 3) normals.push(cross(eq[0], eq[1]));
	axes.push(...normals);
	for (const a of ep) for (const b of eq) axes.push(cross(a, b));
	for (const n of normals) for (const e of [...ep, ...eq]) axes.push(cross(n, e));
	return !separated(axes, p, q);
}
export function oracleCount(m: MeshBuffers): { pairs: number; degenerate: number } {
	const P = (v: number): V => [m.positions[3 * v], m.positions[3 * v + 1], m.positions[3 * v + 2]];
	const n = m.indices.length / 3;
	const tri = (t: number) => [m.indices[3 * t], m.indices[3 * t + 1], m.indices[3 * t + 2]];
	const dead = (t: number) => {
		const [a, b, c] = tri(t);
		return isZero(cross(sub(P(b), P(a)), sub(P(c), P(a))));
	};
	let pairs = 0, degenerate = 0;
	for (let i = 0; i < n; i++) if (dead(i)) degenerate++;
	for (let i = 0; i < n; i++) {
		if (dead(i)) continue;
		for (let j = i + 1; j < n; j++) {
			if (dead(j)) continue;
			const A = tri(i), B = tri(j);
			const shared = A.filter((v) => B.includes(v));
			let hit: boolean;
			if (shared.length === 0) hit = meets(A.map(P), B.map(P));
			else if (shared.length === 3) hit = true;
			else if (shared.length === 1) {
				const oa = A.filter((v) => v !== shared[0]).map(P), ob = B.filter((v) => v !== shared[0]).map(P);
				hit = meets(oa, B.map(P)) || meets(ob, A.map(P));
			} else {
				const [e0, e1] = shared.map(P);
				const oa = P(A.find((v) => !shared.includes(v))!), ob = P(B.find((v) => !shared.includes(v))!);
				const na = cross(sub(e1, e0), sub(oa, e0)), nb = cross(sub(e1, e0), sub(ob, e0));
				hit = dot(cross(sub(e1, e0), sub(oa, e0)), sub(ob, e0)) === 0 && dot(na, nb) > 0;
			}
			if (hit) pairs++;
		}
	}
	return { pairs, degenerate };
}

