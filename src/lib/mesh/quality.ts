/**
 * Per-face and per-edge measures: area, divergence-theorem volume, bbox, exact degeneracy,
 * edge-length and face-quality histograms. One pass each, O(F + E).
 */
import { isDegenerateTriangle } from './predicates';
import { indexedBounds } from './bounds';
import type { EdgeTable } from './edges';
import type { Bbox, Histogram } from './report-types';
import { EDGE_LENGTH_BINS as EDGE_LENGTH_BINS_IMPORT, FACE_QUALITY_BINS as FACE_QUALITY_BINS_IMPORT } from './tolerances';

// Bound once (see predicates.ts: some loaders make each use of an import a getter call).
const FACE_QUALITY_BINS = FACE_QUALITY_BINS_IMPORT;
const EDGE_LENGTH_BINS = EDGE_LENGTH_BINS_IMPORT;

export interface FaceMeasures {
	/** Area of each face (0 for skipped faces). */
	faceArea: Float64Array;
	/** Normalised radius ratio 2r/R of each face, in [0, 1]; 1 = equilateral, 0 = degenerate. */
	faceQuality: Float64Array;
	/** 1 for faces of exactly zero area (exact predicate), including collapsed faces. */
	degenerate: Uint8Array;
	degenerateCount: number;
	area: number;
	/** Σ over faces of (a − o) · ((b − o) × (c − o)) / 6 with o the bbox centre (divergence theorem). */
	volume: number;
	bbox: Bbox;
	qualityHistogram: Histogram;
	/** Per-face signed volume term, so shells can be summed by the caller. */
	faceVolume: Float64Array;
}

/** Bbox of the vertices the faces reference (unreferenced vertices do not count). */
export function referencedBbox(positions: Float64Array, indices: Uint32Array): Bbox {
	const [x0, y0, z0, x1, y1, z1] = indexedBounds(positions, indices);
	if (x0 > x1) return { min: [0, 0, 0], max: [0, 0, 0] };
	return { min: [x0, y0, z0], max: [x1, y1, z1] };
}

export function measureFaces(positions: Float64Array, indices: Uint32Array, skipFace: Uint8Array): FaceMeasures {
	const triCount = (indices.length / 3) | 0;
	const bbox = referencedBbox(positions, indices);
	// Volume about the bbox centre: translation-invariant for closed shells, smaller rounding.
	const ox = 0.5 * (bbox.min[0] + bbox.max[0]);
	const oy = 0.5 * (bbox.min[1] + bbox.max[1]);
	const oz = 0.5 * (bbox.min[2] + bbox.max[2]);
	const faceArea = new Float64Array(triCount);
	const faceQuality = new Float64Array(triCount);
	const faceVolume = new Float64Array(triCount);
	const degenerate = new Uint8Array(triCount);
	const qCounts = new Array<number>(FACE_QUALITY_BINS).fill(0);
	let degenerateCount = 0, area = 0, volume = 0;
	for (let t = 0; t < triCount; t++) {
		const t3 = 3 * t;
		const a = indices[t3], b = indices[t3 + 1], c = indices[t3 + 2];
		if (skipFace[t]) {
			degenerate[t] = 1;
			degenerateCount++;
			qCounts[0]++;
			continue;
		}
		const a3 = 3 * a, b3 = 3 * b, c3 = 3 * c;
		const ax = positions[a3] - ox, ay = positions[a3 + 1] - oy, az = positions[a3 + 2] - oz;
		const bx = positions[b3] - ox, by = positions[b3 + 1] - oy, bz = positions[b3 + 2] - oz;
		const cx = positions[c3] - ox, cy = positions[c3 + 1] - oy, cz = positions[c3 + 2] - oz;
		// Edge vectors from the unshifted coordinates: the shift rounds, differences of inputs are what the exact test sees.
		const ux = positions[b3] - positions[a3], uy = positions[b3 + 1] - positions[a3 + 1], uz = positions[b3 + 2] - positions[a3 + 2];
		const vx = positions[c3] - positions[a3], vy = positions[c3 + 1] - positions[a3 + 1], vz = positions[c3 + 2] - positions[a3 + 2];
		const nx = uy * vz - uz * vy, ny = uz * vx - ux * vz, nz = ux * vy - uy * vx;
		const n2 = nx * nx + ny * ny + nz * nz;
		const A = 0.5 * Math.sqrt(n2);
		const la = Math.sqrt(ux * ux + uy * uy + uz * uz);
		const lb = Math.sqrt(vx * vx + vy * vy + vz * vz);
		const wx = vx - ux, wy = vy - uy, wz = vz - uz;
		const lc = Math.sqrt(wx * wx + wy * wy + wz * wz);
		// Float area clearly above rounding → not degenerate; otherwise decide exactly.
		const isDeg = n2 <= 1e-24 * la * la * lb * lb && isDegenerateTriangle(positions, a, b, c);
		let q = 0;
		if (isDeg) {
			degenerate[t] = 1;
			degenerateCount++;
		} else {
			// 2r/R = 16 A² / ((a + b + c) a b c), r = A/s, R = abc/(4A).
			const den = (la + lb + lc) * la * lb * lc;
			q = den > 0 ? (16 * A * A) / den : 0;
			if (q > 1) q = 1;
			faceArea[t] = A;
			area += A;
		}
		faceQuality[t] = q;
		let bin = (q * FACE_QUALITY_BINS) | 0;
		if (bin >= FACE_QUALITY_BINS) bin = FACE_QUALITY_BINS - 1;
		qCounts[bin]++;
		const vol = (ax * (by * cz - bz * cy) + ay * (bz * cx - bx * cz) + az * (bx * cy - by * cx)) / 6;
		faceVolume[t] = vol;
		volume += vol;
	}
	const qBins: number[] = [];
	for (let i = 0; i <= FACE_QUALITY_BINS; i++) qBins.push(i / FACE_QUALITY_BINS);
	return {
		faceArea,
		faceQuality,
		faceVolume,
		degenerate,
		degenerateCount,
		area,
		volume,
		bbox,
		qualityHistogram: {
			measure: 'normalised radius ratio 2r/R per face (1 = equilateral, 0 = zero area), linear bins on [0, 1]',
			bins: qBins,
			counts: qCounts
		}
	};
}

export interface EdgeMeasures {
	minEdgeLength: number;
	maxEdgeLength: number;
	shortEdges: number;
	histogram: Histogram;
}

export function measureEdges(positions: Float64Array, et: EdgeTable, shortBelow: number): EdgeMeasures {
	const n = et.edgeCount;
	const len = new Float64Array(n);
	let min = Infinity, max = 0, minPositive = Infinity, shortEdges = 0;
	const lo = et.edgeLo, hi = et.edgeHi;
	for (let e = 0; e < n; e++) {
		const a3 = 3 * lo[e], b3 = 3 * hi[e];
		const dx = positions[b3] - positions[a3];
		const dy = positions[b3 + 1] - positions[a3 + 1];
		const dz = positions[b3 + 2] - positions[a3 + 2];
		const l = Math.sqrt(dx * dx + dy * dy + dz * dz);
		len[e] = l;
		if (l < min) min = l;
		if (l > max) max = l;
		if (l > 0 && l < minPositive) minPositive = l;
		if (l < shortBelow) shortEdges++;
	}
	if (n === 0) min = 0;
	const bins: number[] = [];
	const counts = new Array<number>(EDGE_LENGTH_BINS).fill(0);
	if (n > 0 && minPositive < Infinity) {
		// Log-spaced boundaries from the shortest positive to the longest edge; bins[0] is 0 so
		// zero-length edges land in the first bin.
		const l0 = Math.log(minPositive), l1 = Math.log(max);
		const span = l1 - l0 || 1;
		bins.push(0);
		for (let i = 1; i < EDGE_LENGTH_BINS; i++) bins.push(Math.exp(l0 + (span * i) / EDGE_LENGTH_BINS));
		bins.push(max);
		const scale = EDGE_LENGTH_BINS / span;
		for (let e = 0; e < n; e++) {
			const l = len[e];
			let b = l > 0 ? Math.floor((Math.log(l) - l0) * scale) : 0;
			if (b < 0) b = 0;
			if (b >= EDGE_LENGTH_BINS) b = EDGE_LENGTH_BINS - 1;
			counts[b]++;
		}
	} else {
		bins.push(0, 0);
		counts.length = 1;
		counts[0] = n;
	}
	return {
		minEdgeLength: min,
		maxEdgeLength: max,
		shortEdges,
		histogram: {
			measure: 'edge length (model units), log-spaced bins from the shortest positive to the longest edge; first bin starts at 0',
			bins,
			counts
		}
	};
}
