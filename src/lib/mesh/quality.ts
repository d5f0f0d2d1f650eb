/**
 * Per-face and per-edge measures: area, divergence-theorem volume, bbox, exact degeneracy,
 * edge-length and face-quality histograms. One pass each, O(F + E).
 */
import { isDegenerateTriangle } from './predicates';
import { indexedBounds, pointBounds } from './bounds';
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

/**
 * Bbox of the vertices the faces reference (unreferenced vertices do not count). With
 * `allReferenced` (the caller knows every vertex is used by a face, e.g. topology's
 * referencedVertices equals the vertex count) the vertices are scanned in order instead of through
 * the corners: the same set of values, so the same bounds, from a sixth of the reads and none of
 * them scattered.
 */
export function referencedBbox(positions: Float64Array, indices: Uint32Array, allReferenced = false): Bbox {
	const [x0, y0, z0, x1, y1, z1] = allReferenced ? pointBounds(positions) : indexedBounds(positions, indices);
	if (x0 > x1) return { min: [0, 0, 0], max: [0, 0, 0] };
	return { min: [x0, y0, z0], max: [x1, y1, z1] };
}

/** `allReferenced`: every vertex is used by a face (see referencedBbox); only makes the bbox faster. */
export function measureFaces(positions: Float64Array, indices: Uint32Array, skipFace: Uint8Array, allReferenced = false): FaceMeasures {
	const triCount = (indices.length / 3) | 0;
	const bbox = referencedBbox(positions, indices, allReferenced);
	// Volume about the bbox centre: translation-invariant for closed shells, smaller rounding.
	const ox = 0.5 * (bbox.min[0] + bbox.max[0]);
	const oy = 0.5 * (bbox.min[1] + bbox.max[1]);
	const oz = 0.5 * (bbox.min[2] + bbox.max[2]);
	const faceArea = new Float64Array(triCount);
	const faceQuality = new Float64Array(triCount);
	const faceVolume = new Float64Array(triCount);
	const degenerate = new Uint8Array(triCount);
	const qBinCounts = new Float64Array(FACE_QUALITY_BINS);
	faceLoop(positions, indices, skipFace, ox, oy, oz, faceArea, faceQuality, faceVolume, degenerate, qBinCounts);
	// Summed in face order as the loop would have (a skipped face adds +0, which changes no sum).
	const area = sumOf(faceArea), volume = sumOf(faceVolume), degenerateCount = countSet(degenerate);
	const qCounts = Array.from(qBinCounts);
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

/**
 * The per-face loop of measureFaces, in a function of its own that stores every result inside the
 * loop: a fresh process (the command line) runs it once, and code after an optimised loop that has
 * not run yet would send it back to the interpreter.
 */
function faceLoop(
	positions: Float64Array,
	indices: Uint32Array,
	skipFace: Uint8Array,
	ox: number,
	oy: number,
	oz: number,
	faceArea: Float64Array,
	faceQuality: Float64Array,
	faceVolume: Float64Array,
	degenerate: Uint8Array,
	qCounts: Float64Array
): void {
	const triCount = faceArea.length;
	for (let t = 0; t < triCount; t++) {
		const t3 = 3 * t;
		const a = indices[t3], b = indices[t3 + 1], c = indices[t3 + 2];
		if (skipFace[t]) {
			degenerate[t] = 1;
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
		} else {
			// 2r/R = 16 A² / ((a + b + c) a b c), r = A/s, R = abc/(4A).
			const den = (la + lb + lc) * la * lb * lc;
			q = den > 0 ? (16 * A * A) / den : 0;
			if (q > 1) q = 1;
			faceArea[t] = A;
		}
		faceQuality[t] = q;
		let bin = (q * FACE_QUALITY_BINS) | 0;
		if (bin >= FACE_QUALITY_BINS) bin = FACE_QUALITY_BINS - 1;
		qCounts[bin]++;
		const vol = (ax * (by * cz - bz * cy) + ay * (bz * cx - bx * cz) + az * (bx * cy - by * cx)) / 6;
		faceVolume[t] = vol;
	}
}

/** Sum in index order. */
function sumOf(a: Float64Array): number {
	let s = 0;
	for (let i = 0; i < a.length; i++) s += a[i];
	return s;
}

/** Entries that are not 0. */
function countSet(a: Uint8Array): number {
	let n = 0;
	for (let i = 0; i < a.length; i++) if (a[i]) n++;
	return n;
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
	const out = new Float64Array(4);
	edgeLengths(positions, et.edgeLo, et.edgeHi, n, shortBelow, len, out);
	let min = out[0];
	const max = out[1], minPositive = out[2], shortEdges = out[3];
	if (n === 0) min = 0;
	const bins: number[] = [];
	let counts = new Array<number>(EDGE_LENGTH_BINS).fill(0);
	if (n > 0 && minPositive < Infinity) {
		// Log-spaced boundaries from the shortest positive to the longest edge; bins[0] is 0 so
		// zero-length edges land in the first bin.
		const l0 = Math.log(minPositive), l1 = Math.log(max);
		const span = l1 - l0 || 1;
		bins.push(0);
		for (let i = 1; i < EDGE_LENGTH_BINS; i++) bins.push(Math.exp(l0 + (span * i) / EDGE_LENGTH_BINS));
		bins.push(max);
		const scale = EDGE_LENGTH_BINS / span;
		const binCounts = new Float64Array(EDGE_LENGTH_BINS);
		lengthBins(len, l0, scale, binCounts);
		counts = Array.from(binCounts);
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

/**
 * Edge lengths into len; out = [shortest, longest (0 when none), shortest positive (Infinity when
 * none), edges shorter than shortBelow], each stored as it changes (see faceLoop).
 */
function edgeLengths(positions: Float64Array, lo: Uint32Array, hi: Uint32Array, n: number, shortBelow: number, len: Float64Array, out: Float64Array): void {
	let min = Infinity, max = 0, minPositive = Infinity, shortEdges = 0;
	out[0] = min;
	out[1] = max;
	out[2] = minPositive;
	out[3] = shortEdges;
	for (let e = 0; e < n; e++) {
		const a3 = 3 * lo[e], b3 = 3 * hi[e];
		const dx = positions[b3] - positions[a3];
		const dy = positions[b3 + 1] - positions[a3 + 1];
		const dz = positions[b3 + 2] - positions[a3 + 2];
		const l = Math.sqrt(dx * dx + dy * dy + dz * dz);
		len[e] = l;
		if (l < min) out[0] = min = l;
		if (l > max) out[1] = max = l;
		if (l > 0 && l < minPositive) out[2] = minPositive = l;
		if (l < shortBelow) out[3] = ++shortEdges;
	}
}

/** Log-spaced bin counts of the lengths (bin 0 also takes zero lengths). */
function lengthBins(len: Float64Array, l0: number, scale: number, counts: Float64Array): void {
	const last = counts.length - 1;
	for (let e = 0; e < len.length; e++) {
		const l = len[e];
		let b = l > 0 ? Math.floor((Math.log(l) - l0) * scale) : 0;
		if (b < 0) b = 0;
		if (b > last) b = last;
		counts[b]++;
	}
}
