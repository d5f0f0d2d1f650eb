/**
 * GPU-ready buffers for the defect overlays, built in the parse worker next to computeOverlays so
 * the page only wraps finished arrays in geometries: marker positions (hole centres, edge
 * midpoints, face centres, box centres), index buffers of face subsets and box outlines. Pure, no
 * three.js; every array is fresh, so it can be transferred.
 */
import type { MeshOverlays } from '$lib/mesh/overlays';

/** Most markers one kind draws at segment midpoints or face centres; lines and faces stay complete. */
export const MARKER_CAP = 20_000;
/** Most segments a line overlay draws as thick lines at rest; the rest are drawn as 1-pixel lines. */
export const THICK_SEGMENT_CAP = 20_000;
/** Most segments (thick) and markers a kind draws while the camera moves; an even sample stands in. */
export const MOVING_SEGMENT_CAP = 5_000;
export const MOVING_MARKER_CAP = 1_000;

export interface OverlayDraw {
	holeCentres: Float32Array;
	nonManifoldEdgeMidpoints: Float32Array;
	shortEdgeMidpoints: Float32Array;
	degenerateCentres: Float32Array;
	/** Index buffers (3 per face) into the mesh's own vertices. */
	selfIntersectionIndex: Uint32Array;
	flippedIndex: Uint32Array;
	floatingIndex: Uint32Array;
	floatingBoxSegments: Float32Array;
	floatingCentres: Float32Array;
	/** Even samples of at most MOVING_SEGMENT_CAP segments, drawn instead of the full lines while the camera moves; empty when the full set is small enough. */
	holeSegmentsMoving: Float32Array;
	nonManifoldEdgeSegmentsMoving: Float32Array;
	shortEdgeSegmentsMoving: Float32Array;
	/** Even samples of at most THICK_SEGMENT_CAP segments drawn thick at rest; empty when every segment is drawn thick. */
	nonManifoldEdgeSegmentsThick: Float32Array;
	shortEdgeSegmentsThick: Float32Array;
	/** Even samples of at most MOVING_MARKER_CAP markers drawn while the camera moves; empty when all are drawn. */
	nonManifoldEdgeMidpointsMoving: Float32Array;
	shortEdgeMidpointsMoving: Float32Array;
	degenerateCentresMoving: Float32Array;
	/** Items drawn of each kind where the overlay holds fewer than the finding has. */
	sampled: Partial<Record<'nonManifoldEdges' | 'shortEdges' | 'degenerateFaces', { drawn: number; total: number }>>;
}

/** Midpoints of an even sample of at most max segments (6 floats a segment). */
export function midpoints(segments: Float32Array, max: number): Float32Array {
	const total = (segments.length / 6) | 0;
	const n = Math.min(total, max);
	const out = new Float32Array(3 * n);
	const step = total / Math.max(1, n);
	for (let i = 0; i < n; i++) {
		const o = 6 * Math.floor(i * step);
		out[3 * i] = 0.5 * (segments[o] + segments[o + 3]);
		out[3 * i + 1] = 0.5 * (segments[o + 1] + segments[o + 4]);
		out[3 * i + 2] = 0.5 * (segments[o + 2] + segments[o + 5]);
	}
	return out;
}

/** An even sample of at most max segments; empty when there are no more than max. */
export function coarseSegments(segments: Float32Array, max: number): Float32Array {
	const total = (segments.length / 6) | 0;
	if (total <= max) return new Float32Array(0);
	const out = new Float32Array(6 * max);
	const step = total / max;
	for (let i = 0; i < max; i++) out.set(segments.subarray(6 * Math.floor(i * step), 6 * Math.floor(i * step) + 6), 6 * i);
	return out;
}

/** An even sample of at most max points (3 floats each); empty when there are no more than max. */
export function coarsePoints(points: Float32Array, max: number): Float32Array {
	const total = (points.length / 3) | 0;
	if (total <= max) return new Float32Array(0);
	const out = new Float32Array(3 * max);
	const step = total / max;
	for (let i = 0; i < max; i++) out.set(points.subarray(3 * Math.floor(i * step), 3 * Math.floor(i * step) + 3), 3 * i);
	return out;
}

/** Centres of an even sample of at most max of the listed faces. */
export function faceCentres(positions: ArrayLike<number>, indices: Uint32Array, faces: Uint32Array, max = Infinity): Float32Array {
	const n = Math.min(faces.length, max);
	const out = new Float32Array(3 * n);
	const step = faces.length / Math.max(1, n);
	for (let i = 0; i < n; i++) {
		const t3 = 3 * faces[Math.floor(i * step)];
		for (let a = 0; a < 3; a++) out[3 * i + a] = (positions[3 * indices[t3] + a] + positions[3 * indices[t3 + 1] + a] + positions[3 * indices[t3 + 2] + a]) / 3;
	}
	return out;
}

/** Index buffer of the listed faces (face ids may repeat; collapsed faces are kept as they are). */
export function faceIndex(indices: Uint32Array, faces: Uint32Array): Uint32Array {
	const out = new Uint32Array(3 * faces.length);
	for (let i = 0; i < faces.length; i++) {
		const t3 = 3 * faces[i];
		out[3 * i] = indices[t3];
		out[3 * i + 1] = indices[t3 + 1];
		out[3 * i + 2] = indices[t3 + 2];
	}
	return out;
}

/** The 12 edges of each box (min xyz, max xyz), 6 floats a segment. */
export function boxSegments(boxes: Float32Array): Float32Array {
	const n = (boxes.length / 6) | 0;
	const out = new Float32Array(n * 12 * 6);
	// Corners 0–3 on the low z face, 4–7 on the high one, each face counter-clockwise from the low x, low y corner.
	const X = [0, 3, 3, 0, 0, 3, 3, 0], Y = [0, 0, 3, 3, 0, 0, 3, 3], Z = [0, 0, 0, 0, 3, 3, 3, 3];
	const e = [0, 1, 1, 2, 2, 3, 3, 0, 4, 5, 5, 6, 6, 7, 7, 4, 0, 4, 1, 5, 2, 6, 3, 7];
	let w = 0;
	for (let b = 0; b < n; b++) {
		const o = 6 * b;
		for (let k = 0; k < e.length; k++) {
			const c = e[k];
			out[w++] = boxes[o + X[c]];
			out[w++] = boxes[o + 1 + Y[c]];
			out[w++] = boxes[o + 2 + Z[c]];
		}
	}
	return out;
}

export function buildOverlayDraw(o: MeshOverlays, positions: ArrayLike<number>, indices: Uint32Array): OverlayDraw {
	const centres = new Float32Array(3 * o.holes.length);
	o.holes.forEach((h, i) => centres.set(h.centroid, 3 * i));
	const floatingCentres = new Float32Array(3 * o.floatingShells.length);
	for (let i = 0; i < o.floatingShells.length; i++) for (let a = 0; a < 3; a++) floatingCentres[3 * i + a] = 0.5 * (o.floatingBoxes[6 * i + a] + o.floatingBoxes[6 * i + 3 + a]);
	const sampled: OverlayDraw['sampled'] = {};
	const nme = o.nonManifoldEdgeSegments.length / 6, se = o.shortEdgeSegments.length / 6;
	if (o.nonManifoldEdgeCount > nme) sampled.nonManifoldEdges = { drawn: nme, total: o.nonManifoldEdgeCount };
	if (o.shortEdgeCount > se) sampled.shortEdges = { drawn: se, total: o.shortEdgeCount };
	const degenerateCentres = faceCentres(positions, indices, o.degenerateFaces, MARKER_CAP);
	if (o.degenerateFaces.length > MARKER_CAP) sampled.degenerateFaces = { drawn: MARKER_CAP, total: o.degenerateFaces.length };
	const midpointsAll = { nme: midpoints(o.nonManifoldEdgeSegments, MARKER_CAP), se: midpoints(o.shortEdgeSegments, MARKER_CAP) };
	return {
		holeCentres: centres,
		nonManifoldEdgeMidpoints: midpointsAll.nme,
		shortEdgeMidpoints: midpointsAll.se,
		degenerateCentres,
		selfIntersectionIndex: faceIndex(indices, o.selfIntersectionFaces),
		flippedIndex: faceIndex(indices, o.flippedFaces),
		floatingIndex: faceIndex(indices, o.floatingFaces),
		floatingBoxSegments: boxSegments(o.floatingBoxes),
		floatingCentres,
		holeSegmentsMoving: coarseSegments(o.holeSegments, MOVING_SEGMENT_CAP),
		nonManifoldEdgeSegmentsMoving: coarseSegments(o.nonManifoldEdgeSegments, MOVING_SEGMENT_CAP),
		shortEdgeSegmentsMoving: coarseSegments(o.shortEdgeSegments, MOVING_SEGMENT_CAP),
		nonManifoldEdgeSegmentsThick: coarseSegments(o.nonManifoldEdgeSegments, THICK_SEGMENT_CAP),
		shortEdgeSegmentsThick: coarseSegments(o.shortEdgeSegments, THICK_SEGMENT_CAP),
		nonManifoldEdgeMidpointsMoving: coarsePoints(midpointsAll.nme, MOVING_MARKER_CAP),
		shortEdgeMidpointsMoving: coarsePoints(midpointsAll.se, MOVING_MARKER_CAP),
		degenerateCentresMoving: coarsePoints(degenerateCentres, MOVING_MARKER_CAP),
		sampled
	};
}

export function drawTransferables(d: OverlayDraw): ArrayBuffer[] {
	return [d.holeCentres, d.nonManifoldEdgeMidpoints, d.shortEdgeMidpoints, d.degenerateCentres, d.selfIntersectionIndex, d.flippedIndex, d.floatingIndex, d.floatingBoxSegments, d.floatingCentres, d.holeSegmentsMoving, d.nonManifoldEdgeSegmentsMoving, d.shortEdgeSegmentsMoving, d.nonManifoldEdgeSegmentsThick, d.shortEdgeSegmentsThick, d.nonManifoldEdgeMidpointsMoving, d.shortEdgeMidpointsMoving, d.degenerateCentresMoving].map((a) => a.buffer as ArrayBuffer);
}

/**
 * Screen-space thick lines as one plain triangle geometry (no instancing: software WebGL pays about
 * 25 µs per instance, so 5,000 instanced segments took 122 ms a frame). Four corners a segment, each
 * with its own end (position), the other end, a side (−1, +1) and the distance along the segments
 * for dashes; two triangles a segment in index. The vertex shader (layers/thick-lines.ts) pushes
 * each corner out by half the width across the segment and back past its own end, so even a
 * segment shorter than a pixel shows as a dot of the line's width.
 */
export interface LineQuads {
	position: Float32Array;
	other: Float32Array;
	side: Float32Array;
	distance: Float32Array;
	index: Uint32Array;
}

export function lineQuads(segments: Float32Array): LineQuads {
	const n = (segments.length / 6) | 0;
	const position = new Float32Array(12 * n), other = new Float32Array(12 * n);
	const side = new Float32Array(4 * n), distance = new Float32Array(4 * n), index = new Uint32Array(6 * n);
	let along = 0;
	for (let s = 0; s < n; s++) {
		const o = 6 * s, v = 4 * s;
		const len = Math.hypot(segments[o + 3] - segments[o], segments[o + 4] - segments[o + 1], segments[o + 5] - segments[o + 2]);
		// Corners 0, 1 at the start, 2, 3 at the end, each pair on sides −1, +1: seen from the end,
		// "across" turns round, so this order goes once round the quad.
		for (let c = 0; c < 4; c++) {
			const atEnd = c >= 2;
			for (let a = 0; a < 3; a++) {
				position[3 * (v + c) + a] = segments[o + (atEnd ? 3 : 0) + a];
				other[3 * (v + c) + a] = segments[o + (atEnd ? 0 : 3) + a];
			}
			side[v + c] = c % 2 === 0 ? -1 : 1;
			distance[v + c] = atEnd ? along + len : along;
		}
		along += len;
		index.set([v, v + 1, v + 2, v, v + 2, v + 3], 6 * s);
	}
	return { position, other, side, distance, index };
}
