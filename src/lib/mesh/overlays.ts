/**
 * Geometry for the viewer's defect overlays, from the mesh buffers and (optionally) the stored
 * report: boundary loops as segments, non-manifold edges and vertices, short edges, degenerate and
 * flipped face ids, floating-shell faces, self-intersection points. Runs the engine's own
 * topology (analyseTopology) so ids and counts agree with the report built from the same file.
 * Segments are 6 float32 per segment (a xyz, b xyz), ready for GPU line buffers. O(F + E).
 */
import { analyseTopology, collapsedFaces } from './topology';
import { measureFaces } from './quality';
import type { InspectionReport } from './report-types';
import type { MeshBuffers } from './types';
import { DEFAULT_TOLERANCES } from './tolerances';
import { smallShellIds } from './hints';

export interface OverlayOptions {
	/** Edges strictly shorter than this are listed as short (same rule as the report's shortEdges). 0 lists none. */
	minEdgeLength?: number;
	/** Most items drawn per kind; counts stay exact. Above it, edges are an even sample over the edge table. Default 200 000. */
	maxItems?: number;
}

export interface HoleLoop {
	/** Segments of this loop are holeSegments[6·segStart .. 6·(segStart + edgeCount)). */
	segStart: number;
	edgeCount: number;
	perimeter: number;
	/** Mean of the loop corners, computed as the report computes HoleInfo.centroid. */
	centroid: [number, number, number];
	shell: number;
}

export interface MeshOverlays {
	triCount: number;
	shellCount: number;
	/** Shell of each face (same numbering as report.shells); −1 for collapsed faces. */
	faceShell: Int32Array;
	holeSegments: Float32Array;
	holes: HoleLoop[];
	nonManifoldEdgeCount: number;
	nonManifoldEdgeSegments: Float32Array;
	nonManifoldVertexCount: number;
	/** 3 per vertex. */
	nonManifoldVertexPoints: Float32Array;
	shortEdgeCount: number;
	shortEdgeSegments: Float32Array;
	degenerateFaces: Uint32Array;
	flippedFaces: Uint32Array;
	/** Shell ids counted as floating: not the largest by area and below the small-shell area share. */
	floatingShells: Uint32Array;
	/** Faces of the floating shells, grouped by shell: faces of floatingShells[i] are floatingFaces[floatingStart[i] .. floatingStart[i + 1]). */
	floatingFaces: Uint32Array;
	floatingStart: Uint32Array;
	/** Per floating shell: bbox min xyz, max xyz. */
	floatingBoxes: Float32Array;
	/** From report.selfIntersectionSample: 3 per point, and the two faces of each pair. */
	selfIntersectionPoints: Float32Array;
	selfIntersectionFaces: Uint32Array;
	/** True when a kind had more items than maxItems and only the first maxItems are drawn. */
	truncated: boolean;
}

/** All overlay geometry for one mesh. `report` supplies the self-intersection sample and the floating-shell rule's tolerance. */
export function computeOverlays(mesh: MeshBuffers, report: InspectionReport | null, opts: OverlayOptions = {}): MeshOverlays {
	const p = mesh.positions, idx = mesh.indices;
	const triCount = (idx.length / 3) | 0;
	const vertCount = (p.length / 3) | 0;
	const maxItems = opts.maxItems ?? 200_000;
	const minLen = opts.minEdgeLength ?? 0;
	let truncated = false;

	const collapsed = collapsedFaces(idx);
	const topo = analyseTopology(idx, vertCount, collapsed.mask);
	const { edgeCount, edgeStart, edgeLo, edgeHi } = topo.edges;
	const shells = topo.shells;

	const putSeg = (out: Float32Array, s: number, a: number, b: number) => {
		const o = 6 * s, a3 = 3 * a, b3 = 3 * b;
		out[o] = p[a3];
		out[o + 1] = p[a3 + 1];
		out[o + 2] = p[a3 + 2];
		out[o + 3] = p[b3];
		out[o + 4] = p[b3 + 1];
		out[o + 5] = p[b3 + 2];
	};

	// Holes: every loop, in the engine's loop order.
	const { loopCount, loopStart, loopEdges, loopVerts } = topo.loops;
	const holeSegs = Math.min(loopStart[loopCount] ?? 0, maxItems);
	if ((loopStart[loopCount] ?? 0) > maxItems) truncated = true;
	const holeSegments = new Float32Array(6 * holeSegs);
	const holes: HoleLoop[] = [];
	for (let l = 0; l < loopCount; l++) {
		const s = loopStart[l], n = loopStart[l + 1] - s;
		let per = 0, sx = 0, sy = 0, sz = 0;
		for (let i = s; i < s + n; i++) {
			const e = loopEdges[i];
			const a3 = 3 * edgeLo[e], b3 = 3 * edgeHi[e];
			per += Math.hypot(p[b3] - p[a3], p[b3 + 1] - p[a3 + 1], p[b3 + 2] - p[a3 + 2]);
			const v3 = 3 * loopVerts[i];
			sx += p[v3];
			sy += p[v3 + 1];
			sz += p[v3 + 2];
			if (i < holeSegs) putSeg(holeSegments, i, edgeLo[e], edgeHi[e]);
		}
		holes.push({
			segStart: s,
			edgeCount: Math.max(0, Math.min(n, holeSegs - s)),
			perimeter: per,
			centroid: [sx / n, sy / n, sz / n],
			shell: topo.loops.shell[l]
		});
	}

	// Non-manifold edges (three or more faces) and short edges, one pass over the edge table.
	let nmCount = 0, shortCount = 0;
	for (let e = 0; e < edgeCount; e++) {
		if (edgeStart[e + 1] - edgeStart[e] >= 3) nmCount++;
		if (minLen > 0) {
			const a3 = 3 * edgeLo[e], b3 = 3 * edgeHi[e];
			const dx = p[b3] - p[a3], dy = p[b3 + 1] - p[a3 + 1], dz = p[b3 + 2] - p[a3 + 2];
			// Compare lengths, not squares, so the rule is exactly measureEdges' `l < shortBelow`.
			if (Math.sqrt(dx * dx + dy * dy + dz * dz) < minLen) shortCount++;
		}
	}
	const nmSegments = new Float32Array(6 * Math.min(nmCount, maxItems));
	const shortSegments = new Float32Array(6 * Math.min(shortCount, maxItems));
	if (nmCount > maxItems || shortCount > maxItems) truncated = true;
	// Above the cap, the k-th of n items is drawn when it starts a new slot of n / cap items: an even
	// sample spread over the whole part, not the first cap items of one region.
	const keep = (k: number, n: number) => n <= maxItems || Math.floor(((k + 1) * maxItems) / n) > Math.floor((k * maxItems) / n);
	for (let e = 0, i = 0, j = 0, nk = 0, sk = 0; e < edgeCount; e++) {
		if (edgeStart[e + 1] - edgeStart[e] >= 3) {
			if (keep(nk, nmCount) && i < maxItems) putSeg(nmSegments, i++, edgeLo[e], edgeHi[e]);
			nk++;
		}
		if (minLen > 0) {
			const a3 = 3 * edgeLo[e], b3 = 3 * edgeHi[e];
			const dx = p[b3] - p[a3], dy = p[b3 + 1] - p[a3 + 1], dz = p[b3 + 2] - p[a3 + 2];
			if (Math.sqrt(dx * dx + dy * dy + dz * dz) < minLen) {
				if (keep(sk, shortCount) && j < maxItems) putSeg(shortSegments, j++, edgeLo[e], edgeHi[e]);
				sk++;
			}
		}
	}

	// Non-manifold vertices: more than one fan of faces around the vertex.
	const fans = topo.vertexFans;
	let nmvCount = 0;
	for (let v = 0; v < vertCount; v++) if (fans[v] > 1) nmvCount++;
	const nmvPoints = new Float32Array(3 * Math.min(nmvCount, maxItems));
	if (nmvCount > maxItems) truncated = true;
	for (let v = 0, i = 0; v < vertCount && i < maxItems; v++) {
		if (fans[v] <= 1) continue;
		nmvPoints[3 * i] = p[3 * v];
		nmvPoints[3 * i + 1] = p[3 * v + 1];
		nmvPoints[3 * i + 2] = p[3 * v + 2];
		i++;
	}

	// Degenerate faces: the report's rule (collapsed, or exactly zero area).
	const fm = measureFaces(p, idx, collapsed.mask);
	const degenerateFaces = maskToIds(fm.degenerate, maxItems);
	const flippedFaces = maskToIds(topo.flipFace, maxItems);
	if (degenerateFaces.length < fm.degenerateCount) truncated = true;

	// Floating shells: the report's hint rule (smallShellIds, shared with hints.ts).
	const shellCount = shells.shellCount;
	const shellArea = new Float64Array(shellCount);
	for (let t = 0; t < triCount; t++) if (shells.faceShell[t] >= 0) shellArea[shells.faceShell[t]] += fm.faceArea[t];
	const floatList = smallShellIds(shellArea, shells.faces, { ...DEFAULT_TOLERANCES, ...report?.tolerances });
	const floatingShells = Uint32Array.from(floatList);
	const slot = new Int32Array(shellCount).fill(-1);
	for (let i = 0; i < floatList.length; i++) slot[floatList[i]] = i;
	const floatingStart = new Uint32Array(floatList.length + 1);
	for (let t = 0; t < triCount; t++) {
		const s = shells.faceShell[t];
		if (s >= 0 && slot[s] >= 0) floatingStart[slot[s] + 1]++;
	}
	for (let i = 0; i < floatList.length; i++) floatingStart[i + 1] += floatingStart[i];
	const floatingFaces = new Uint32Array(floatingStart[floatList.length]);
	const fill = floatingStart.slice(0, floatList.length);
	const floatingBoxes = new Float32Array(6 * floatList.length);
	for (let i = 0; i < floatList.length; i++) {
		floatingBoxes.fill(Infinity, 6 * i, 6 * i + 3);
		floatingBoxes.fill(-Infinity, 6 * i + 3, 6 * i + 6);
	}
	for (let t = 0; t < triCount; t++) {
		const s = shells.faceShell[t];
		if (s < 0 || slot[s] < 0) continue;
		const i = slot[s];
		floatingFaces[fill[i]++] = t;
		const b6 = 6 * i;
		for (let k = 0; k < 3; k++) {
			const v3 = 3 * idx[3 * t + k];
			for (let a = 0; a < 3; a++) {
				const x = p[v3 + a];
				if (x < floatingBoxes[b6 + a]) floatingBoxes[b6 + a] = x;
				if (x > floatingBoxes[b6 + 3 + a]) floatingBoxes[b6 + 3 + a] = x;
			}
		}
	}

	const sample = report?.selfIntersectionSample ?? [];
	const siPoints = new Float32Array(3 * sample.length);
	const siFaces = new Uint32Array(2 * sample.length);
	for (let i = 0; i < sample.length; i++) {
		siPoints[3 * i] = sample[i].point[0];
		siPoints[3 * i + 1] = sample[i].point[1];
		siPoints[3 * i + 2] = sample[i].point[2];
		siFaces[2 * i] = sample[i].a;
		siFaces[2 * i + 1] = sample[i].b;
	}

	return {
		triCount,
		shellCount,
		faceShell: shells.faceShell,
		holeSegments,
		holes,
		nonManifoldEdgeCount: nmCount,
		nonManifoldEdgeSegments: nmSegments,
		nonManifoldVertexCount: nmvCount,
		nonManifoldVertexPoints: nmvPoints,
		shortEdgeCount: shortCount,
		shortEdgeSegments: shortSegments,
		degenerateFaces,
		flippedFaces,
		floatingShells,
		floatingFaces,
		floatingStart,
		floatingBoxes,
		selfIntersectionPoints: siPoints,
		selfIntersectionFaces: siFaces,
		truncated
	};
}

function maskToIds(mask: Uint8Array, maxItems: number): Uint32Array {
	let n = 0;
	for (let t = 0; t < mask.length; t++) if (mask[t]) n++;
	const out = new Uint32Array(Math.min(n, maxItems));
	for (let t = 0, i = 0; t < mask.length && i < out.length; t++) if (mask[t]) out[i++] = t;
	return out;
}

/** Typed arrays of an overlay result, for a worker's transfer list (no copies). */
export function overlayTransferables(o: MeshOverlays): ArrayBuffer[] {
	const arrays = [
		o.faceShell,
		o.holeSegments,
		o.nonManifoldEdgeSegments,
		o.nonManifoldVertexPoints,
		o.shortEdgeSegments,
		o.degenerateFaces,
		o.flippedFaces,
		o.floatingShells,
		o.floatingFaces,
		o.floatingStart,
		o.floatingBoxes,
		o.selfIntersectionPoints,
		o.selfIntersectionFaces
	];
	const seen = new Set<ArrayBuffer>();
	for (const a of arrays) seen.add(a.buffer as ArrayBuffer);
	return [...seen];
}

/**
 * Index of the computed loop that a report hole describes: the report computes the centroid the
 * same way over the same loop, so it matches exactly; the nearest centroid is the fallback.
 */
export function loopForHole(holes: HoleLoop[], centroid: [number, number, number]): number {
	let best = -1, bestD = Infinity;
	for (let l = 0; l < holes.length; l++) {
		const c = holes[l].centroid;
		const d = (c[0] - centroid[0]) ** 2 + (c[1] - centroid[1]) ** 2 + (c[2] - centroid[2]) ** 2;
		if (d < bestD) (bestD = d), (best = l);
		if (d === 0) break;
	}
	return best;
}
