/**
 * Closes T-junction slits: where a vertex of one face lies on the edge of a neighbouring face that
 * does not have it (faces triangulated separately on either side of a seam, as CAD exports leave
 * them), both sides of the seam are boundary edges and the rim between them encloses no area. Each
 * boundary edge a→b (face a, b, c) with boundary vertices strictly inside it, within `tol` of the
 * segment, is split at them: the face becomes the fan (a, v₁, c), (v₁, v₂, c), …, (v_k, b, c), in
 * the face's own winding, so the new edges meet the other side's edges vertex for vertex. No vertex
 * moves; a face changes shape by at most tol. Passes repeat (at most 8) while a split pairs up
 * further vertices. O(B + sum over boundary edges of the grid cells they cross), B boundary edges.
 */
import { buildEdges } from '../edges';
import { checkMesh, type RepairResult } from './common';
import type { MeshBuffers } from '../types';

export interface TJunctionCounts {
	/** Boundary edges split at vertices lying on them. */
	edgesSplit: number;
	/** Vertices an edge was split at (T-junctions closed). */
	junctions: number;
	/** Faces added by the splits. */
	facesAdded: number;
}

const MAX_PASSES = 8;

export function splitTJunctions(mesh: MeshBuffers, tol: number): RepairResult<TJunctionCounts> {
	checkMesh(mesh, 'split-t-junctions');
	const p = mesh.positions;
	let ix: Uint32Array = mesh.indices.slice();
	const counts: TJunctionCounts = { edgesSplit: 0, junctions: 0, facesAdded: 0 };
	if (!(tol >= 0) || !Number.isFinite(tol)) return { mesh: { positions: p.slice(), indices: ix }, counts };
	for (let pass = 0; pass < MAX_PASSES; pass++) {
		const r = splitPass(p, ix, tol);
		if (r.junctions === 0) break;
		ix = r.indices;
		counts.edgesSplit += r.edgesSplit;
		counts.junctions += r.junctions;
		counts.facesAdded += r.junctions;
	}
	return { mesh: { positions: p.slice(), indices: ix }, counts };
}

function splitPass(p: Float64Array, ix: Uint32Array, tol: number): { indices: Uint32Array; edgesSplit: number; junctions: number } {
	const vertCount = p.length / 3, triCount = ix.length / 3;
	const et = buildEdges(ix, vertCount);
	const { edgeCount, edgeStart, heSorted } = et;
	// Boundary halfedges (their edge has one face) and the vertices on them.
	const boundaryHe: number[] = [];
	const onBoundary = new Uint8Array(vertCount);
	for (let e = 0; e < edgeCount; e++) {
		if (edgeStart[e + 1] - edgeStart[e] !== 1) continue;
		const h = heSorted[edgeStart[e]];
		boundaryHe.push(h);
		onBoundary[ix[h]] = 1;
		onBoundary[ix[3 * ((h / 3) | 0) + (((h % 3) + 1) % 3)]] = 1;
	}
	if (boundaryHe.length < 3) return { indices: ix, edgesSplit: 0, junctions: 0 };
	// A uniform grid over the boundary vertices, cells about the mean boundary edge long.
	let meanLen = 0;
	for (const h of boundaryHe) {
		const a = 3 * ix[h], b = 3 * ix[3 * ((h / 3) | 0) + (((h % 3) + 1) % 3)];
		meanLen += Math.hypot(p[b] - p[a], p[b + 1] - p[a + 1], p[b + 2] - p[a + 2]);
	}
	meanLen /= boundaryHe.length;
	const cell = Math.max(meanLen, 4 * tol, Number.MIN_VALUE);
	const grid = new Map<string, number[]>();
	const key = (x: number, y: number, z: number) => `${x},${y},${z}`;
	for (let v = 0; v < vertCount; v++) {
		if (!onBoundary[v]) continue;
		const k = key(Math.floor(p[3 * v] / cell), Math.floor(p[3 * v + 1] / cell), Math.floor(p[3 * v + 2] / cell));
		const list = grid.get(k);
		if (list) list.push(v);
		else grid.set(k, [v]);
	}
	// For each boundary halfedge, the boundary vertices strictly inside it, by distance along it.
	const splits = new Map<number, { v: number; t: number }[]>();
	let junctions = 0;
	for (const h of boundaryHe) {
		const f = (h / 3) | 0, a = ix[h], b = ix[3 * f + (((h % 3) + 1) % 3)];
		const a3 = 3 * a, b3 = 3 * b;
		const dx = p[b3] - p[a3], dy = p[b3 + 1] - p[a3 + 1], dz = p[b3 + 2] - p[a3 + 2];
		const len2 = dx * dx + dy * dy + dz * dz;
		if (!(len2 > 0)) continue;
		const len = Math.sqrt(len2);
		const lo = [Math.min(p[a3], p[b3]) - tol, Math.min(p[a3 + 1], p[b3 + 1]) - tol, Math.min(p[a3 + 2], p[b3 + 2]) - tol];
		const hi = [Math.max(p[a3], p[b3]) + tol, Math.max(p[a3 + 1], p[b3 + 1]) + tol, Math.max(p[a3 + 2], p[b3 + 2]) + tol];
		const found: { v: number; t: number }[] = [];
		for (let gx = Math.floor(lo[0] / cell); gx <= Math.floor(hi[0] / cell); gx++) {
			for (let gy = Math.floor(lo[1] / cell); gy <= Math.floor(hi[1] / cell); gy++) {
				for (let gz = Math.floor(lo[2] / cell); gz <= Math.floor(hi[2] / cell); gz++) {
					for (const v of grid.get(key(gx, gy, gz)) ?? []) {
						if (v === a || v === b) continue;
						const v3 = 3 * v;
						const t = ((p[v3] - p[a3]) * dx + (p[v3 + 1] - p[a3 + 1]) * dy + (p[v3 + 2] - p[a3 + 2]) * dz) / len2;
						// Strictly inside: farther than tol from both ends.
						if (t * len <= tol || (1 - t) * len <= tol) continue;
						const ex = p[a3] + t * dx - p[v3], ey = p[a3 + 1] + t * dy - p[v3 + 1], ez = p[a3 + 2] + t * dz - p[v3 + 2];
						if (ex * ex + ey * ey + ez * ez <= tol * tol) found.push({ v, t });
					}
				}
			}
		}
		if (found.length === 0) continue;
		found.sort((x, y) => x.t - y.t || x.v - y.v);
		// One split per vertex position along the edge.
		const kept = found.filter((x, i) => i === 0 || x.v !== found[i - 1].v);
		splits.set(h, kept);
		junctions += kept.length;
	}
	if (junctions === 0) return { indices: ix, edgesSplit: 0, junctions: 0 };
	// A face may have more than one split edge: one of them is split per pass (the rest the next).
	// Each split face's fan takes its place, so the other faces keep their order.
	const fans = new Map<number, number[]>();
	let edgesSplit = 0, made = 0;
	for (const [h, vs] of splits) {
		const f = (h / 3) | 0;
		if (fans.has(f)) continue;
		const k = h % 3;
		const a = ix[3 * f + k], b = ix[3 * f + ((k + 1) % 3)], c = ix[3 * f + ((k + 2) % 3)];
		const fan: number[] = [];
		let prev = a;
		for (const { v } of vs) {
			fan.push(prev, v, c);
			prev = v;
		}
		fan.push(prev, b, c);
		fans.set(f, fan);
		edgesSplit++;
		made += vs.length;
	}
	const next = new Uint32Array(3 * (triCount + made));
	let o = 0;
	for (let f = 0; f < triCount; f++) {
		const fan = fans.get(f);
		if (fan) for (const x of fan) next[o++] = x;
		else {
			next[o++] = ix[3 * f];
			next[o++] = ix[3 * f + 1];
			next[o++] = ix[3 * f + 2];
		}
	}
	return { indices: next, edgesSplit, junctions: made };
}
