/**
 * Split non-manifold (pinch) vertices: the corners around each vertex are grouped into fans
 * (corners joined through edges the two faces share there, the same rule as topology.ts), and each
 * fan after the first gets its own copy of the vertex. Afterwards every vertex has one fan.
 *
 * Non-manifold edges (three or more faces) are left as they are and counted: which faces belong
 * together across such an edge is a guess (two bodies touching, or a fin?), and a wrong guess
 * makes a worse mesh, so that decision is left to the user. Fans are joined across non-manifold
 * edges too, so the vertices of such an edge are not split either. O(H α(H)).
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
	/** Non-manifold edges seen and left unchanged. */
	nonManifoldEdgesLeft: number;
}

export function splitNonManifoldVertices(mesh: MeshBuffers): RepairResult<SplitCounts> {
	checkMesh(mesh, 'split-non-manifold-vertices');
	const p = mesh.positions, ix = mesh.indices;
	const vertCount = p.length / 3, heCount = ix.length;
	const skip = collapsedFaces(ix).mask;
	const { edgeCount, edgeStart, heSorted, edgeLo } = buildEdges(ix, vertCount, skip);
	// Corner c = 3t + k sits at ix[c]; halfedge h starts at corner h and ends at corner next(h).
	const parent = new Int32Array(heCount);
	for (let c = 0; c < heCount; c++) parent[c] = c;
	let nonManifoldEdgesLeft = 0;
	for (let e = 0; e < edgeCount; e++) {
		const s = edgeStart[e], n = edgeStart[e + 1] - s;
		if (n < 2) continue;
		if (n > 2) nonManifoldEdgesLeft++;
		const lo = edgeLo[e];
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
	return { mesh: { positions, indices }, counts: { verticesSplit, verticesAdded: extra.length, nonManifoldEdgesLeft } };
}
