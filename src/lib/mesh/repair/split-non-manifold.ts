/**
 * Split non-manifold (pinch) vertices: the corners around each vertex are grouped into fans
 * (corners joined through edges the two faces share there, the same rule as topology.ts), and each
 * fan after the first gets its own copy of the vertex. Afterwards every vertex has one fan.
 *
 * Non-manifold edges (three or more faces) are separated only in the one case that is not a guess:
 * an even number of faces, consistently wound, that pair up radially around the edge into solid
 * wedges (bodies touching along the edge, e.g. two blocks sharing an edge). Faces are sorted by the
 * angle of their third vertex around the edge; a pair (f_i, f_i+1) bounds a wedge of solid when
 * f_i runs b → a and f_i+1 runs a → b (normals point out of the wedge). Only those pairs join
 * corners across the edge, so the vertex split then gives each body its own copy of the edge.
 * Every other non-manifold edge (odd count, fins, mixed winding) is left and counted: which faces
 * belong together there is a guess, and a wrong guess makes a worse mesh. O(H α(H)).
 */
import { buildEdges, nextHalfedge } from '../edges';
import { collapsedFaces } from '../topology';
import { checkMesh, findRoot, unionRoots, type RepairResult } from './common';
import type { MeshBuffers } from '../types';

export interface SplitCounts {
	/** Vertices that had more than one fan. */
	verticesSplit: number;
	/** New vertex copies made. */
	verticesAdded: number;
	/** Non-manifold edges separated by radial pairing into solid wedges. */
	nonManifoldEdgesSplit: number;
	/** Non-manifold edges left unchanged (no unambiguous pairing). */
	nonManifoldEdgesLeft: number;
}

export function splitNonManifoldVertices(mesh: MeshBuffers): RepairResult<SplitCounts> {
	checkMesh(mesh, 'split-non-manifold-vertices');
	const p = mesh.positions, ix = mesh.indices;
	const vertCount = p.length / 3, heCount = ix.length;
	const skip = collapsedFaces(ix).mask;
	const { edgeCount, edgeStart, heSorted, edgeLo, edgeHi } = buildEdges(ix, vertCount, skip);
	// Corner c = 3t + k sits at ix[c]; halfedge h starts at corner h and ends at corner next(h).
	const parent = new Int32Array(heCount);
	for (let c = 0; c < heCount; c++) parent[c] = c;
	let nonManifoldEdgesLeft = 0, nonManifoldEdgesSplit = 0;
	for (let e = 0; e < edgeCount; e++) {
		const s = edgeStart[e], n = edgeStart[e + 1] - s;
		if (n < 2) continue;
		const lo = edgeLo[e];
		if (n > 2) {
			const pairs = radialPairs(p, ix, heSorted.subarray(s, s + n), lo, edgeHi[e]);
			if (!pairs) nonManifoldEdgesLeft++;
			else {
				nonManifoldEdgesSplit++;
				for (let i = 0; i < n; i += 2) {
					const h = pairs[i], g = pairs[i + 1];
					// h runs hi → lo, g runs lo → hi: join their corners at lo and at hi.
					unionRoots(parent, nextHalfedge(h), g);
					unionRoots(parent, h, nextHalfedge(g));
				}
				continue;
			}
		}
		const h0 = heSorted[s];
		const lo0 = ix[h0] === lo ? h0 : nextHalfedge(h0);
		const hi0 = ix[h0] === lo ? nextHalfedge(h0) : h0;
		for (let i = 1; i < n; i++) {
			const h = heSorted[s + i];
			const startIsLo = ix[h] === lo;
			unionRoots(parent, lo0, startIsLo ? h : nextHalfedge(h));
			unionRoots(parent, hi0, startIsLo ? nextHalfedge(h) : h);
		}
	}
	// First fan root met at a vertex keeps the vertex; later roots get copies.
	const firstRoot = new Int32Array(vertCount).fill(-1);
	const copyOf = new Int32Array(heCount).fill(-1);
	const extra: number[] = [];
	const splitMark = new Uint8Array(vertCount);
	let verticesSplit = 0;
	for (let c = 0; c < heCount; c++) {
		if (skip[(c / 3) | 0] || findRoot(parent, c) !== c) continue;
		const v = ix[c];
		if (firstRoot[v] < 0) {
			firstRoot[v] = c;
			copyOf[c] = v;
		} else {
			copyOf[c] = vertCount + extra.length;
			extra.push(v);
			if (!splitMark[v]) {
				splitMark[v] = 1;
				verticesSplit++;
			}
		}
	}
	const positions = new Float64Array(p.length + 3 * extra.length);
	positions.set(p);
	for (let i = 0; i < extra.length; i++) {
		const v3 = 3 * extra[i], o = 3 * (vertCount + i);
		positions[o] = p[v3];
		positions[o + 1] = p[v3 + 1];
		positions[o + 2] = p[v3 + 2];
	}
	const indices = new Uint32Array(heCount);
	for (let c = 0; c < heCount; c++) indices[c] = skip[(c / 3) | 0] ? ix[c] : copyOf[findRoot(parent, c)];
	return { mesh: { positions, indices }, counts: { verticesSplit, verticesAdded: extra.length, nonManifoldEdgesSplit, nonManifoldEdgesLeft } };
}

/**
 * Halfedges of one non-manifold edge (lo, hi) ordered as solid-wedge pairs [h0, g0, h1, g1, …]
 * with each h running hi → lo and each g lo → hi, or null when there is no such pairing.
 */
function radialPairs(p: Float64Array, ix: Uint32Array, hes: Uint32Array, lo: number, hi: number): number[] | null {
	const n = hes.length;
	if (n % 2 !== 0) return null;
	const l3 = 3 * lo, h3 = 3 * hi;
	let dx = p[h3] - p[l3], dy = p[h3 + 1] - p[l3 + 1], dz = p[h3 + 2] - p[l3 + 2];
	const dl = Math.hypot(dx, dy, dz);
	if (!(dl > 0)) return null;
	dx /= dl; dy /= dl; dz /= dl;
	// Basis u, w of the plane across the edge with u × w = d.
	let ux: number, uy: number, uz: number;
	if (Math.abs(dx) < 0.9) { ux = 0; uy = dz; uz = -dy; } else { ux = -dz; uy = 0; uz = dx; }
	const ul = Math.hypot(ux, uy, uz);
	ux /= ul; uy /= ul; uz /= ul;
	const wx = dy * uz - dz * uy, wy = dz * ux - dx * uz, wz = dx * uy - dy * ux;
	const items: { h: number; angle: number; forward: boolean }[] = [];
	for (let i = 0; i < n; i++) {
		const h = hes[i];
		const third = ix[h % 3 === 0 ? h + 2 : h - 1]; // corner before h = the one not on the edge
		const c3 = 3 * third;
		const rx = p[c3] - p[l3], ry = p[c3 + 1] - p[l3 + 1], rz = p[c3 + 2] - p[l3 + 2];
		const angle = Math.atan2(rx * wx + ry * wy + rz * wz, rx * ux + ry * uy + rz * uz);
		items.push({ h, angle, forward: ix[h] === lo });
	}
	items.sort((a, b) => a.angle - b.angle);
	for (let i = 1; i < n; i++) if (items[i].angle === items[i - 1].angle) return null; // coincident faces: ambiguous
	// A face running lo → hi has its normal towards increasing angle; the wedge (f_i, f_i+1) is solid
	// when f_i runs hi → lo and f_i+1 runs lo → hi. Try both phases of the cyclic order.
	for (let phase = 0; phase < 2; phase++) {
		const out: number[] = [];
		let ok = true;
		for (let k = 0; k < n && ok; k += 2) {
			const a = items[(k + phase) % n], b = items[(k + phase + 1) % n];
			if (a.forward || !b.forward) ok = false;
			else out.push(a.h, b.h);
		}
		if (ok) return out;
	}
	return null;
}
