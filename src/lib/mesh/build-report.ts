/** Assembles the InspectionReport from topology, measures, projections and hints. */
import { DEFAULT_MAX_FACES, type ParsedMesh } from './types';
import { validateMesh } from './validate';
import { indexedBounds } from './bounds';
import { fmtLength } from '../format';
import { analyseTopology, collapsedFaces, type TopologyResult } from './topology';
import type { EdgeTable } from './edges';
import { measureEdges, measureFaces, type FaceMeasures } from './quality';
import { frontalArea, REFINE, type SilhouetteScratch } from './projection';
import { buildHints, overlappingBodiesHint, SEPARATE_BODIES_ASSEMBLY, SEPARATE_BODIES_OVERLAPPING } from './hints';
import { exactWeldMap } from './weld';
import { DEFAULT_TOLERANCES } from './tolerances';
import {
	ENGINE_VERSION,
	type BboxPlane,
	type BuildReportOptions,
	type ExactWeldPreview,
	type HoleInfo,
	type InspectionReport,
	type SelfIntersectionInput,
	type ShellInfo,
	type Tolerances,
	type VolumeUndefinedReason,
	type Vec3
} from './report-types';

const PLANES: BboxPlane[] = ['x-min', 'y-min', 'z-min', 'x-max', 'y-max', 'z-max'];

export function normaliseDirection(d: Vec3 | undefined): Vec3 {
	const v = d ?? [1, 0, 0];
	const l = Math.hypot(v[0], v[1], v[2]);
	if (!(l > 0) || !Number.isFinite(l)) throw new RangeError(`flow direction ${JSON.stringify(v)} has no length`);
	return [v[0] / l, v[1] / l, v[2] / l];
}

function holeTable(parsed: ParsedMesh, topo: TopologyResult, fm: FaceMeasures, tol: Tolerances): HoleInfo[] {
	const p = parsed.positions;
	const { loopCount, loopStart, loopEdges, loopVerts, shell } = topo.loops;
	const { edgeLo, edgeHi } = topo.edges;
	const bb = fm.bbox;
	const diag = Math.hypot(bb.max[0] - bb.min[0], bb.max[1] - bb.min[1], bb.max[2] - bb.min[2]);
	const eps = tol.planeRel * diag;
	const holes: HoleInfo[] = [];
	const COS_CORNER = Math.cos((10 * Math.PI) / 180), COS_STRAIGHT = Math.cos((0.5 * Math.PI) / 180);
	const box = new Float64Array(6);
	for (let l = 0; l < loopCount; l++) {
		let per = 0, per2 = 0, sx = 0, sy = 0, sz = 0, corners = 0, straight = 0;
		// Vector area about the first rim vertex: the area a planar rim encloses, 0 for a slit whose sides lie on each other.
		let ax2 = 0, ay2 = 0, az2 = 0;
		const s = loopStart[l], n = loopStart[l + 1] - s;
		const o3 = 3 * loopVerts[s];
		const [x0, y0, z0, x1, y1, z1] = indexedBounds(p, loopVerts, s, s + n, box);
		for (let i = s; i < s + n; i++) {
			const e = loopEdges[i];
			const a3 = 3 * edgeLo[e], b3 = 3 * edgeHi[e];
			const len = Math.hypot(p[b3] - p[a3], p[b3 + 1] - p[a3 + 1], p[b3 + 2] - p[a3 + 2]);
			per += len;
			per2 += len * len;
			const v3 = 3 * loopVerts[i];
			// Turn at this vertex: from the previous rim vertex to the next one.
			const u3 = 3 * loopVerts[i === s ? s + n - 1 : i - 1], w3 = 3 * loopVerts[i === s + n - 1 ? s : i + 1];
			const ix = p[v3] - p[u3], iy = p[v3 + 1] - p[u3 + 1], iz = p[v3 + 2] - p[u3 + 2];
			const ox = p[w3] - p[v3], oy = p[w3 + 1] - p[v3 + 1], oz = p[w3 + 2] - p[v3 + 2];
			const il = Math.hypot(ix, iy, iz), ol = Math.hypot(ox, oy, oz);
			const cos = il > 0 && ol > 0 ? (ix * ox + iy * oy + iz * oz) / (il * ol) : 1;
			if (cos < COS_CORNER) corners++;
			else if (cos > COS_STRAIGHT) straight++;
			sx += p[v3];
			sy += p[v3 + 1];
			sz += p[v3 + 2];
			const vx = p[v3] - p[o3], vy = p[v3 + 1] - p[o3 + 1], vz = p[v3 + 2] - p[o3 + 2];
			const wx = p[w3] - p[o3], wy = p[w3 + 1] - p[o3 + 1], wz = p[w3 + 2] - p[o3 + 2];
			ax2 += vy * wz - vz * wy;
			ay2 += vz * wx - vx * wz;
			az2 += vx * wy - vy * wx;
		}
		const lmin = [x0, y0, z0], lmax = [x1, y1, z1];
		let onPlane: BboxPlane | null = null;
		for (let ax = 0; ax < 3 && !onPlane; ax++) {
			if (lmax[ax] - bb.min[ax] <= eps) onPlane = PLANES[ax];
			else if (bb.max[ax] - lmin[ax] <= eps) onPlane = PLANES[ax + 3];
		}
		holes.push({
			edgeCount: n,
			perimeter: per,
			area: 0.5 * Math.hypot(ax2, ay2, az2),
			centroid: [sx / n, sy / n, sz / n],
			bbox: { min: [x0, y0, z0], max: [x1, y1, z1] },
			onBboxPlane: onPlane,
			shell: shell[l],
			corners,
			straightShare: n > 0 ? straight / n : 0,
			edgeLengthSpread: n > 0 && per > 0 ? Math.sqrt(Math.max(0, per2 / n - (per / n) ** 2)) / (per / n) : 0
		});
	}
	return holes;
}

/** Topology after welding exactly coincident vertices (indexed formats); null when there are none. */
export function exactWeldPreview(parsed: ParsedMesh): ExactWeldPreview | null {
	if (parsed.stats.duplicatePositions === 0) return null;
	const vertCount = (parsed.positions.length / 3) | 0;
	const { map, twins } = exactWeldMap(parsed.positions, vertCount);
	if (twins === 0) return null;
	const idx = new Uint32Array(parsed.indices.length);
	for (let i = 0; i < idx.length; i++) idx[i] = map[parsed.indices[i]];
	const topo = analyseTopology(idx, vertCount, collapsedFaces(idx).mask);
	const sh = topo.shells;
	let genus: number | null = 0;
	for (let s = 0; s < sh.shellCount; s++) {
		const manifold = sh.nonManifoldEdges[s] === 0 && sh.nonManifoldVertices[s] === 0;
		if (!manifold || sh.orientable[s] !== 1) {
			genus = null;
			break;
		}
		genus += (2 - (sh.vertices[s] - sh.edges[s] + sh.faces[s]) - sh.boundaryLoops[s]) / 2;
	}
	return {
		coincidentVertices: twins,
		boundaryEdges: topo.boundaryEdges,
		boundaryLoops: topo.loops.loopCount,
		shells: sh.shellCount,
		nonManifoldEdges: topo.nonManifoldEdges,
		genus,
		watertight: topo.activeFaces > 0 && topo.boundaryEdges === 0 && topo.nonManifoldEdges === 0 && topo.nonManifoldVertices === 0
	};
}

/**
 * Per shell: area and signed volume (the bbox: shellBoxes). A function of its own, so a fresh
 * process optimises this loop alone rather than all of buildReport.
 */
function shellSums(faceShell: Int32Array, faceArea: Float64Array, faceVolume: Float64Array, sArea: Float64Array, sVol: Float64Array): void {
	const triCount = faceShell.length;
	for (let t = 0; t < triCount; t++) {
		const s = faceShell[t];
		if (s < 0) continue;
		sArea[s] += faceArea[t];
		sVol[s] += faceVolume[t];
	}
}

/**
 * Per shell bbox through the corners of its faces, [x0, y0, z0, x1, y1, z1] per shell, set to
 * ±Infinity beforehand (a function of its own, as shellSums). Not needed for a single shell
 * holding every vertex: its bbox is then the mesh's.
 */
function shellBoxes(p: Float64Array, idx: Uint32Array, faceShell: Int32Array, sBox: Float64Array): void {
	const triCount = faceShell.length;
	for (let t = 0; t < triCount; t++) {
		const s = faceShell[t];
		if (s < 0) continue;
		const b6 = 6 * s;
		for (let k = 0; k < 3; k++) {
			const v3 = 3 * idx[3 * t + k];
			for (let a = 0; a < 3; a++) {
				const x = p[v3 + a];
				if (x < sBox[b6 + a]) sBox[b6 + a] = x;
				if (x > sBox[b6 + 3 + a]) sBox[b6 + 3 + a] = x;
			}
		}
	}
}

/** out[t] = 1 for the faces of closed, manifold, consistently oriented shells (their shadow needs one facing). */
function closedShellFaces(faceShell: Int32Array, boundaryEdges: Uint32Array, nonManifoldEdges: Uint32Array, inconsistentEdges: Uint32Array, out: Uint8Array): void {
	for (let t = 0; t < out.length; t++) {
		const s = faceShell[t];
		if (s >= 0 && boundaryEdges[s] === 0 && nonManifoldEdges[s] === 0 && inconsistentEdges[s] === 0) out[t] = 1;
	}
}

/** What buildReport made on the way that a later stage can use. */
export interface ReportByproducts {
	/** The edge table over every face, when no face was left out of it (no collapsed face): the one buildEdges would give. */
	edges?: EdgeTable;
}

/**
 * Build the full report (self-intersections come in through opts.selfIntersections). `out`
 * receives byproducts for the caller's later stages (e.g. the cell-size checks' edge table).
 */
export function buildReport(parsed: ParsedMesh, opts: BuildReportOptions = {}, out?: ReportByproducts): InspectionReport {
	return buildReportParts(parsed, opts, out).report;
}

/**
 * Puts a self-intersection result into a report: the count, the sample with each face's shell, its
 * time, and the overlapping-bodies hint (after the separate-bodies one) when listed pairs join two
 * shells and no unwelded seam explains them. faceShell: shell of each face (−1 for faces left out of the topology).
 */
export function attachSelfIntersections(report: InspectionReport, si: SelfIntersectionInput, faceShell: Int32Array): void {
	report.selfIntersectingPairs = si.pairs;
	report.selfIntersectionSample = si.sample.map((x) => ({ a: x.a, b: x.b, point: [x.point[0], x.point[1], x.point[2]] as Vec3, shells: [faceShell[x.a], faceShell[x.b]] as [number, number] }));
	report.timings.selfIntersections = si.ms;
	// Unwelded seams split one surface into shells whose faces meet along the seam: not bodies.
	const seams = report.hints.some((h) => h.kind === 'unwelded-seams');
	const hint = seams ? null : overlappingBodiesHint(report.selfIntersectionSample, si.pairs);
	if (hint) {
		const after = report.hints.findIndex((h) => h.kind === 'separate-bodies');
		report.hints.splice(after < 0 ? report.hints.length : after + 1, 0, hint);
		// "If this is an assembly, that is expected" is not true of bodies that cross.
		if (after >= 0) report.hints[after].message = report.hints[after].message.replace(SEPARATE_BODIES_ASSEMBLY, SEPARATE_BODIES_OVERLAPPING);
	}
}

/** buildReport, and the shell of each face for stages that arrive after the report (inspect-node). */
export function buildReportParts(parsed: ParsedMesh, opts: BuildReportOptions = {}, out?: ReportByproducts): { report: InspectionReport; faceShell: Int32Array } {
	const timings: Record<string, number> = { ...(opts.timings ?? {}) };
	const triCount = (parsed.indices.length / 3) | 0;
	const vertCount = (parsed.positions.length / 3) | 0;
	const maxFaces = opts.maxFaces ?? DEFAULT_MAX_FACES;
	validateMesh(parsed, { maxFaces });
	const flow = normaliseDirection(opts.flowDirection);
	const progress = (stage: string, percent: number) => opts.onProgress?.(stage, percent);
	const tol: Tolerances = {
		...DEFAULT_TOLERANCES,
		minEdgeLength: opts.minEdgeLength ?? 0,
		rasterCells: opts.rasterCells ?? DEFAULT_TOLERANCES.rasterCells
	};

	progress('topology', 0);
	let t0 = performance.now();
	const collapsed = opts.collapsed ?? collapsedFaces(parsed.indices);
	const topo = analyseTopology(parsed.indices, vertCount, collapsed.mask);
	timings.topology = performance.now() - t0;
	if (out && collapsed.count === 0) out.edges = topo.edges;

	progress('measures', 45);
	t0 = performance.now();
	const allReferenced = topo.referencedVertices === vertCount;
	const fm = measureFaces(parsed.positions, parsed.indices, collapsed.mask, allReferenced);
	const em = measureEdges(parsed.positions, topo.edges, tol.minEdgeLength);
	timings.measures = performance.now() - t0;

	progress('shells', 65);
	t0 = performance.now();
	const sh = topo.shells;
	const shellCount = sh.shellCount;
	const sArea = new Float64Array(shellCount), sVol = new Float64Array(shellCount);
	const sBox = new Float64Array(6 * shellCount);
	for (let s = 0; s < shellCount; s++) {
		sBox[6 * s] = sBox[6 * s + 1] = sBox[6 * s + 2] = Infinity;
		sBox[6 * s + 3] = sBox[6 * s + 4] = sBox[6 * s + 5] = -Infinity;
	}
	const p = parsed.positions, idx = parsed.indices;
	shellSums(sh.faceShell, fm.faceArea, fm.faceVolume, sArea, sVol);
	// One shell and every vertex used by an active face (so by that shell): the same set of
	// coordinates as the mesh's bbox, which the measures already found.
	if (shellCount === 1 && allReferenced) {
		for (let a = 0; a < 3; a++) {
			sBox[a] = fm.bbox.min[a];
			sBox[3 + a] = fm.bbox.max[a];
		}
	} else shellBoxes(p, idx, sh.faceShell, sBox);
	const shells: ShellInfo[] = [];
	let genusSum: number | null = 0, wettedArea = 0;
	let reason: VolumeUndefinedReason | null = null;
	for (let s = 0; s < shellCount; s++) {
		const chi = sh.vertices[s] - sh.edges[s] + sh.faces[s];
		const manifold = sh.nonManifoldEdges[s] === 0 && sh.nonManifoldVertices[s] === 0;
		const orientable = sh.orientable[s] === 1;
		const b = sh.boundaryLoops[s];
		const genus = manifold && orientable ? (2 - chi - b) / 2 : null;
		if (genus === null) genusSum = null;
		else if (genusSum !== null) genusSum += genus;
		const closed = sh.boundaryEdges[s] === 0;
		const consistent = sh.inconsistentEdges[s] === 0;
		if (closed) wettedArea += sArea[s];
		if (!closed) reason = 'open';
		else if (!manifold && reason !== 'open') reason = 'non-manifold';
		else if (!consistent && reason === null) reason = 'inconsistent-orientation';
		const b6 = 6 * s;
		shells.push({
			faces: sh.faces[s],
			vertices: sh.vertices[s],
			edges: sh.edges[s],
			boundaryEdges: sh.boundaryEdges[s],
			boundaryLoops: b,
			closed,
			manifold,
			orientable,
			consistentlyOriented: consistent,
			flippedFaces: sh.flippedFaces[s],
			eulerCharacteristic: chi,
			genus,
			signedVolume: sVol[s],
			volume: closed && manifold && consistent ? sVol[s] : null,
			area: sArea[s],
			bbox: { min: [sBox[b6], sBox[b6 + 1], sBox[b6 + 2]], max: [sBox[b6 + 3], sBox[b6 + 4], sBox[b6 + 5]] }
		});
	}
	const allHoles = holeTable(parsed, topo, fm, tol);
	const listed =
		allHoles.length <= tol.maxHolesListed
			? allHoles
			: allHoles
					.map((h, i) => ({ h, i }))
					.sort((x, y) => y.h.perimeter - x.h.perimeter || x.i - y.i)
					.slice(0, tol.maxHolesListed)
					.map((x) => x.h);
	timings.shells = performance.now() - t0;

	progress('projection', 70);
	t0 = performance.now();
	const scratch: SilhouetteScratch = { proj: new Float64Array(0), grid: new Uint8Array(0), allReferenced };
	const oneSided = new Uint8Array(triCount);
	closedShellFaces(sh.faceShell, sh.boundaryEdges, sh.nonManifoldEdges, sh.inconsistentEdges, oneSided);
	const cells = tol.rasterCells;
	const px = frontalArea(p, idx, collapsed.mask, topo.edges, [1, 0, 0], cells, scratch, oneSided);
	const py = frontalArea(p, idx, collapsed.mask, topo.edges, [0, 1, 0], cells, scratch, oneSided);
	const pz = frontalArea(p, idx, collapsed.mask, topo.edges, [0, 0, 1], cells, scratch, oneSided);
	const isAxis = (a: number) => Math.abs(flow[a]) === 1;
	const pf = isAxis(0) ? px : isAxis(1) ? py : isAxis(2) ? pz : frontalArea(p, idx, collapsed.mask, topo.edges, flow, cells, scratch, oneSided);
	timings.projection = performance.now() - t0;

	progress('hints', 95);
	t0 = performance.now();
	const exactWeld = exactWeldPreview(parsed);
	const hints = buildHints({
		faces: triCount,
		bbox: fm.bbox,
		boundaryEdges: topo.boundaryEdges,
		nonManifoldEdges: topo.nonManifoldEdges,
		exactWeld,
		shells,
		holes: allHoles,
		area: fm.area,
		faceQuality: fm.faceQuality,
		skipFace: collapsed.mask,
		positions: p,
		indices: idx,
		edges: topo.edges,
		shortEdges: em.shortEdges,
		tolerances: tol,
		units: opts.units
	});
	timings.hints = performance.now() - t0;

	const si = opts.selfIntersections ?? null;
	let orientable = true, flippedFaces = 0;
	for (const s of shells) {
		if (!s.orientable) orientable = false;
		flippedFaces += s.flippedFaces;
	}
	const regionCounts = parsed.regions.map((r) => ({ name: r.name, faces: r.faceCount }));
	const report: InspectionReport = {
		engineVersion: ENGINE_VERSION,
		format: parsed.format,
		fileName: opts.fileName ?? '',
		vertices: vertCount,
		faces: triCount,
		edges: topo.edges.edgeCount,
		weldedVertices: parsed.stats.weldedVertices,
		duplicatePositions: parsed.stats.duplicatePositions,
		exactWeld,
		polygonsSplit: parsed.stats.polygonsSplit,
		regions: regionCounts,
		boundaryEdges: topo.boundaryEdges,
		boundaryLoops: topo.loops.loopCount,
		holes: listed,
		nonManifoldEdges: topo.nonManifoldEdges,
		nonManifoldVertices: topo.nonManifoldVertices,
		orientable,
		consistentlyOriented: topo.inconsistentEdges === 0,
		flippedFaces,
		components: shellCount,
		shells,
		eulerCharacteristic: topo.referencedVertices - topo.edges.edgeCount + topo.activeFaces,
		genus: genusSum,
		watertight: topo.activeFaces > 0 && topo.boundaryEdges === 0 && topo.nonManifoldEdges === 0 && topo.nonManifoldVertices === 0,
		selfIntersectingPairs: null,
		selfIntersectionSample: [],
		degenerateFaces: fm.degenerateCount,
		duplicateFaces: topo.duplicateFaces,
		minEdgeLength: em.minEdgeLength,
		maxEdgeLength: em.maxEdgeLength,
		shortEdges: em.shortEdges,
		edgeLengthHistogram: em.histogram,
		faceQualityHistogram: fm.qualityHistogram,
		bbox: fm.bbox,
		area: fm.area,
		volume: reason === null ? fm.volume : null,
		volumeUndefinedReason: reason,
		projectedArea: {
			x: px.area,
			y: py.area,
			z: pz.area,
			errorBounds: [px.errorBound, py.errorBound, pz.errorBound],
			flow: {
				direction: flow,
				area: pf.area,
				errorBound: pf.errorBound,
				method:
					pf.method === 'union'
						? 'silhouette as the exact union of all projected triangles (integer polygon clipping, corners snapped to a grid of at least 2^25 steps across the box of the outline); bound = area the snapping and the rounded edge crossings can move'
						: pf.method === 'slabs'
							? 'silhouette as the union of all projected triangles, integrated over horizontal slabs between the heights where outline-candidate edges end or cross (the cut length is linear in each, so each slab counts its height × the cut length at its middle); bound = rounding of the cut lengths, and of crossings too close to split at'
							: `silhouette by pixel-centre raster of all projected triangles, ${pf.cellsX}×${pf.cellsY} cells of ${fmtLength(pf.cellSize, opts.units ?? 'units')}; cells met by outline-candidate edges sampled again on ${REFINE}×${REFINE} sub-cells; bound = sub-cell area × sub-cells met by those edges`
			}
		},
		wettedArea: reason === null ? wettedArea : null,
		hints,
		cellSizeChecks: null,
		timings,
		tolerances: tol
	};
	if (si) attachSelfIntersections(report, si, sh.faceShell);
	return { report, faceShell: sh.faceShell };
}
