/**
 * Plain-words hints from facts already measured. Each says what was measured; a likely origin is
 * named only where the measures point to it (see looksCut).
 */
import type { EdgeTable } from './edges';
import type { Bbox, ExactWeldPreview, Hint, HoleInfo, SelfIntersectionSample, ShellInfo, Tolerances } from './report-types';
import { fmtCount, fmtLength } from '../format';

export interface HintInput {
	shells: ShellInfo[];
	/** All holes (not only the listed ones). */
	holes: HoleInfo[];
	area: number;
	faces: number;
	bbox: Bbox;
	boundaryEdges: number;
	nonManifoldEdges: number;
	exactWeld: ExactWeldPreview | null;
	faceQuality: Float64Array;
	skipFace: Uint8Array;
	positions: Float64Array;
	indices: Uint32Array;
	edges: EdgeTable;
	shortEdges: number;
	tolerances: Tolerances;
	/** Unit of the coordinates (the project's), for the lengths in the texts; default "units". */
	units?: string;
}

function pct(share: number): string {
	return share < 0.001 ? `${(share * 100).toPrecision(2)} %` : `${(share * 100).toFixed(1)} %`;
}

const int = (n: number) => fmtCount(n);
const plural = (n: number, one: string, many = `${one}s`) => `${int(n)} ${n === 1 ? one : many}`;

/**
 * Shells to call specks that can be removed: every shell but the largest (by area) that is below
 * smallShellAreaShare of the area and smallShellFaceShare of the faces, and only while all of them
 * together stay below smallShellAreaShare of the area. Otherwise none: the pieces are bodies (an
 * assembly, a model of many parts), and removing them would change what the mesh is.
 */
export function smallShellIds(shellArea: ArrayLike<number>, shellFaces: ArrayLike<number>, tol: Tolerances): number[] {
	const n = shellArea.length;
	if (n < 2) return [];
	let largest = 0, area = 0, faces = 0;
	for (let s = 0; s < n; s++) {
		area += shellArea[s];
		faces += shellFaces[s];
		if (shellArea[s] > shellArea[largest]) largest = s;
	}
	const total = area > 0 ? area : 1, totalFaces = faces > 0 ? faces : 1;
	const ids: number[] = [];
	let together = 0;
	for (let s = 0; s < n; s++) {
		if (s === largest) continue;
		if (shellArea[s] / total < tol.smallShellAreaShare && shellFaces[s] / totalFaces < tol.smallShellFaceShare) {
			ids.push(s);
			together += shellArea[s];
		}
	}
	return together / total < tol.smallShellAreaShare ? ids : [];
}

/**
 * A hole that encloses no area: its width (2 × area / perimeter, for a slit of length L and width w
 * about w) is at most a millionth of the part's size, the standard weld tolerance.
 */
export function isSlit(h: HoleInfo, diag: number): boolean {
	return h.perimeter > 0 && (2 * h.area) / h.perimeter <= 1e-6 * diag;
}

/** Evidence that a hole is where a sampling box cut the surface (see buildHints). */
function looksCut(h: HoleInfo, bbox: Bbox, diag: number): boolean {
	if (!h.onBboxPlane) return false;
	const axis = h.onBboxPlane[0] === 'x' ? 0 : h.onBboxPlane[0] === 'y' ? 1 : 2;
	// The mesh reaches away from the plane (a flat sheet lies in its own bbox planes) …
	if (bbox.max[axis] - bbox.min[axis] < 1e-3 * diag) return false;
	// … and the rim is a long curve of uneven steps, as a grid cut leaves it: not a polygon of
	// straight sides, however divided (a missing CAD face), nor an evenly divided circle (a
	// tessellated CAD edge).
	return h.edgeCount >= 12 && h.edgeLengthSpread > 0.25 && h.straightShare < 0.5;
}

const AXES = ['x', 'y', 'z'] as const;

export function buildHints(inp: HintInput): Hint[] {
	const hints: Hint[] = [];
	const tol = inp.tolerances;
	const total = inp.area > 0 ? inp.area : 1;
	const bb = inp.bbox;
	const diag = Math.hypot(bb.max[0] - bb.min[0], bb.max[1] - bb.min[1], bb.max[2] - bb.min[2]);
	// Every length through the one formatter, with its unit; round-off against the part's size is 0.
	const len = (x: number) => fmtLength(x, inp.units ?? 'units', { scale: diag });

	// Unwelded seams first: they make one surface read as many shells, holes and crossings.
	const w = inp.exactWeld;
	if (w && (w.boundaryEdges < inp.boundaryEdges || w.shells < inp.shells.length)) {
		const parts = [
			`${int(w.boundaryEdges)} boundary edge${w.boundaryEdges === 1 ? '' : 's'} (now ${int(inp.boundaryEdges)})`,
			`${plural(w.shells, 'shell')} (now ${int(inp.shells.length)})`
		];
		if (w.nonManifoldEdges !== inp.nonManifoldEdges) parts.push(`${int(w.nonManifoldEdges)} non-manifold edges (now ${int(inp.nonManifoldEdges)})`);
		const closed = w.watertight ? ` It would then be closed${w.genus !== null ? ` with genus ${w.genus}` : ''}.` : '';
		// The crossing-pair count may arrive after the hints (inspect-node), so it is not quoted here.
		const pairs = ' Faces that meet only along such a seam can also be counted as crossing pairs until they share their vertices.';
		hints.push({
			kind: 'unwelded-seams',
			message: `The seams are not welded: ${plural(w.coincidentVertices, 'vertex', 'vertices')} sit${w.coincidentVertices === 1 ? 's' : ''} at exactly the position of another vertex but ${w.coincidentVertices === 1 ? 'is a separate vertex' : 'are separate vertices'}, so the faces on either side are not joined. Welding them exactly (nothing moves) would leave ${parts.join(' and ')}.${closed}${pairs} Weld first, then read the other findings again.`,
			count: w.coincidentVertices,
			areaShare: null
		});
	}

	// What an exact weld fully explains is not said again below.
	const seamsJoinAll = hints.length > 0 && w !== null && w.shells === 1;
	const seamsCloseAll = hints.length > 0 && w !== null && w.boundaryEdges === 0;

	// Separate pieces: specks are advised away, bodies are only counted.
	if (inp.shells.length > 1 && !seamsJoinAll) {
		const areas = inp.shells.map((s) => s.area), faces = inp.shells.map((s) => s.faces);
		const specks = smallShellIds(areas, faces, tol);
		const speckSet = new Set(specks);
		let speckArea = 0, speckFaces = 0;
		for (const s of specks) {
			speckArea += areas[s];
			speckFaces += faces[s];
		}
		if (specks.length > 0) {
			hints.push({
				kind: 'floating-shells',
				message: `${plural(specks.length, 'small loose piece')} float${specks.length === 1 ? 's' : ''} apart from the main surface: ${pct(speckArea / total)} of the area and ${plural(speckFaces, 'face')} together, each below ${pct(tol.smallShellAreaShare)} of the area and ${pct(tol.smallShellFaceShare)} of the faces. Removing them changes the area by ${pct(speckArea / total)}.`,
				count: specks.length,
				areaShare: speckArea / total
			});
		}
		const bodies = inp.shells.length - specks.length;
		if (bodies > 1) {
			let largest = 0;
			for (let s = 0; s < areas.length; s++) if (!speckSet.has(s) && areas[s] > largest) largest = areas[s];
			let bodyArea = 0;
			for (let s = 0; s < areas.length; s++) if (!speckSet.has(s)) bodyArea += areas[s];
			hints.push({
				kind: 'separate-bodies',
				message: `The mesh is made of ${int(bodies)} separate bodies that share no edge; the largest holds ${pct(largest / total)} of the area and the others ${pct((bodyArea - largest) / total)}. Each becomes a body of its own in the flow. ${SEPARATE_BODIES_ASSEMBLY}`,
				count: bodies,
				areaShare: (bodyArea - largest) / total
			});
		}
	}

	// A flat surface: no extent along one axis, so it encloses nothing and its rims lie in the bbox.
	let flatAxis = -1;
	if (diag > 0) for (let a = 0; a < 3; a++) if (bb.max[a] - bb.min[a] <= 1e-9 * diag) flatAxis = a;
	if (flatAxis >= 0 && inp.boundaryEdges > 0) {
		hints.push({
			kind: 'flat-surface',
			message: `The surface is flat (no extent along ${AXES[flatAxis]}): a sheet with ${plural(inp.holes.length, 'rim')}, not a body. It encloses no volume; a flow body needs a closed surface.`,
			count: inp.holes.length,
			areaShare: null
		});
	}

	// Openings: slits that enclose no area (T-junctions), those with the marks of a sampling-box cut,
	// and the rest said plainly.
	const planes = new Map<string, number>();
	let clipped = 0, clippedPerimeter = 0, plain = 0, plainPerimeter = 0, largestPlain = 0, fewSided = 0;
	let slits = 0, slitLength = 0;
	for (const h of inp.holes) {
		if (isSlit(h, diag)) {
			slits++;
			slitLength += h.perimeter / 2;
		} else if (looksCut(h, bb, diag)) {
			clipped++;
			clippedPerimeter += h.perimeter;
			planes.set(h.onBboxPlane!, (planes.get(h.onBboxPlane!) ?? 0) + 1);
		} else {
			plain++;
			plainPerimeter += h.perimeter;
			if (h.perimeter > largestPlain) largestPlain = h.perimeter;
			if (h.corners > 0 && h.corners <= 8) fewSided++;
		}
	}
	if (slits > 0 && !seamsCloseAll) {
		hints.push({
			kind: 'zero-width-openings',
			message: `${slits === 1 ? '1 opening has' : `${int(slits)} openings have`} no width (${len(slitLength)} of seam in all): ${slits === 1 ? 'its rim runs' : 'their rims run'} out and back along the same line, as where a face has a vertex in the middle of its neighbour's edge (a T-junction, left where neighbouring faces were triangulated separately). Nothing is missing. Splitting those edges at the vertices on them closes the seam without moving anything: upstream in the export, or with the repair step that closes T-junction slits.`,
			count: slits,
			areaShare: null
		});
	}
	if (clipped > 0 && !seamsCloseAll) {
		const where = [...planes.keys()].sort().join(', ');
		hints.push({
			kind: 'clipped-by-bbox-plane',
			message: `${clipped} opening${clipped === 1 ? ' lies' : 's lie'} flat on the bounding box (${where}) with long rims of uneven steps (total rim ${len(clippedPerimeter)}), as where a sampling box cuts a surface. If the shape was sampled on a grid, enlarge the box; otherwise cap the opening.`,
			count: clipped,
			areaShare: null
		});
	}
	if (plain > 0 && flatAxis < 0 && !seamsCloseAll) {
		const sides = fewSided > 0 ? ` ${fewSided === plain ? (plain === 1 ? 'Its rim has' : 'Their rims have') : `${fewSided} of them have`} few corners, as where a flat face is missing.` : '';
		hints.push({
			kind: 'openings',
			message: `The surface has ${plural(plain, 'opening')} (largest rim ${len(largestPlain)}, ${len(plainPerimeter)} in all).${sides} Close ${plain === 1 ? 'it' : 'them'} upstream, or let a repair fill ${plain === 1 ? 'it' : 'them'} if ${plain === 1 ? 'it is' : 'they are'} small against the cell size.`,
			count: plain,
			areaShare: null
		});
	}

	// Clusters of slivers: sliver faces joined through shared edges, clusters of at least sliverClusterMin.
	{
		const q = inp.faceQuality, skip = inp.skipFace;
		const triCount = q.length;
		const slivers = countSlivers(q, skip, tol.sliverQuality);
		if (slivers >= tol.sliverClusterMin) {
			const parent = new Int32Array(triCount);
			joinSlivers(q, tol.sliverQuality, inp.edges, parent);
			const size = new Uint32Array(triCount);
			clusterSizes(q, skip, tol.sliverQuality, parent, size);
			const clusters = countAtLeast(size, tol.sliverClusterMin);
			const inClusters = sumAtLeast(size, tol.sliverClusterMin);
			if (clusters > 0) {
				// Two kinds of thin triangle want opposite remedies: one with a tiny edge (two vertices
				// nearly coincide, as where a generator's vertex lands next to another) loses it when those
				// vertices are merged; a long strip with no tiny edge (a coarse tessellation of a flat face or
				// a cylinder) has the right shape and only a remesh helps: collapsing its short edge would
				// move the surface by half that edge. "Tiny" is a thousandth of the part's size.
				const tiny = 1e-3 * diag;
				const withTiny = tinyEdgeSlivers(inp.positions, inp.indices, q, skip, tol.sliverQuality, parent, size, tol.sliverClusterMin, tiny);
				const head = `${clusters} patch${clusters === 1 ? '' : 'es'} of needle-thin triangles (${int(inClusters)} faces with radius ratio below ${tol.sliverQuality}, joined edge to edge). A volume mesher builds poorly shaped cells against them.`;
				const strips = inClusters - withTiny;
				const merge = withTiny > 0 ? ` ${withTiny === inClusters ? (withTiny === 1 ? 'It has' : 'Each has') : `${int(withTiny)} of them ${withTiny === 1 ? 'has' : 'have'}`} an edge under ${len(tiny)} (a thousandth of the part's size): merging those nearly coincident vertices removes ${withTiny === 1 ? 'it' : 'them'} without visibly moving the surface.` : '';
				const remesh = strips > 0 ? ` ${withTiny > 0 ? `The other ${int(strips)} ${strips === 1 ? 'is a long, thin strip' : 'are long, thin strips'}` : `None has an edge under ${len(tiny)} (a thousandth of the part's size): ${strips === 1 ? 'it is a long, thin strip' : 'they are long, thin strips'}`}, as a coarse tessellation of flat faces and cylinders leaves them; the shape there is as meant. Remesh the surface there, or export it with a maximum edge length near the cell size; collapsing their short edges would change the shape.` : '';
				hints.push({
					kind: 'sliver-cluster',
					message: head + merge + remesh,
					count: clusters,
					areaShare: null
				});
			}
		}
	}

	if (inp.shortEdges > 0) {
		hints.push({
			kind: 'short-edges',
			message: `${inp.shortEdges} edge${inp.shortEdges === 1 ? ' is' : 's are'} shorter than the target length ${len(tol.minEdgeLength)}; the volume mesher would have to resolve them or will fail near them.`,
			count: inp.shortEdges,
			areaShare: null
		});
	}

	let inverted = 0, invertedArea = 0;
	for (const s of inp.shells) {
		if (s.closed && s.manifold && s.consistentlyOriented && s.signedVolume < 0) {
			inverted++;
			invertedArea += s.area;
		}
	}
	if (inverted > 0) {
		hints.push({
			kind: 'inside-out',
			message: `${inverted} closed shell${inverted === 1 ? ' has' : 's have'} normals pointing inwards (negative volume); flip all faces of ${inverted === 1 ? 'it' : 'them'}, unless ${inverted === 1 ? 'it is' : 'they are'} meant as a cavity inside another shell.`,
			count: inverted,
			areaShare: invertedArea / total
		});
	}
	return hints;
}

/** The separate-bodies hint's last sentence, and what replaces it when the bodies also pass into each other. */
export const SEPARATE_BODIES_ASSEMBLY = 'If they are meant to be one part, join them upstream; if this is an assembly, that is expected.';
export const SEPARATE_BODIES_OVERLAPPING = 'If they are meant to be one part, join them upstream; an assembly has bodies of its own, but these pass into each other (next hint).';

/**
 * Separate bodies that pass into each other: listed crossing pairs whose two faces lie in different
 * shells. The self-intersection count can arrive after the other hints (inspect-node), so this one
 * is made when it does (attachSelfIntersections in build-report.ts). Null when no listed pair joins
 * two shells.
 */
export function overlappingBodiesHint(sample: SelfIntersectionSample[], pairs: number): Hint | null {
	const between = sample.filter((x) => x.shells[0] !== x.shells[1]);
	if (between.length === 0) return null;
	const bodies = new Set(between.flatMap((x) => x.shells)).size;
	const all = between.length === sample.length;
	const of = sample.length < pairs ? `${all ? 'all' : int(between.length)} of the ${int(sample.length)} listed (of ${plural(pairs, 'crossing pair')})` : all ? `all ${plural(pairs, 'crossing pair')}` : `${int(between.length)} of the ${plural(pairs, 'crossing pair')}`;
	return {
		kind: 'overlapping-bodies',
		message: `${int(bodies)} separate bodies pass into each other: ${of} join faces of two different shells. Bodies that overlap or touch give the flow no single closed surface around them, and where they cross no repair can tell which part is meant: unite them into one body (a boolean union) or move them apart where the shape is made.${all ? '' : ' The other crossings lie within one shell.'}`,
		count: bodies,
		areaShare: null
	};
}

// The face and edge loops of the sliver clusters, each a small function returning its result: a
// fresh process (the command line) runs each once, and a loop optimised inside a large function
// drops back to the interpreter at the first code after it that has not run yet.

/** Faces not skipped with quality below the threshold. */
function countSlivers(q: Float64Array, skip: Uint8Array, below: number): number {
	let n = 0;
	for (let t = 0; t < q.length; t++) if (!skip[t] && q[t] < below) n++;
	return n;
}

/** Union-find root of x, halving the path on the way. */
function findRoot(parent: Int32Array, x: number): number {
	while (parent[x] !== x) x = parent[x] = parent[parent[x]];
	return x;
}

/** parent: for each face, a face of its sliver cluster (roots are the smallest face of each). */
function joinSlivers(q: Float64Array, below: number, edges: EdgeTable, parent: Int32Array): void {
	identity(parent);
	const edgeCount = edges.edgeCount, edgeStart = edges.edgeStart, heSorted = edges.heSorted;
	for (let e = 0; e < edgeCount; e++) {
		const s = edgeStart[e], n = edgeStart[e + 1] - s;
		let first = -1;
		for (let i = 0; i < n; i++) {
			const f = (heSorted[s + i] / 3) | 0;
			if (q[f] >= below) continue;
			if (first < 0) first = f;
			else {
				const a = findRoot(parent, first), b = findRoot(parent, f);
				if (a !== b) parent[a < b ? b : a] = a < b ? a : b;
			}
		}
	}
}

/** a[i] = i. */
function identity(a: Int32Array): void {
	for (let i = 0; i < a.length; i++) a[i] = i;
}

/** size[root] = sliver faces in the cluster of that root. */
function clusterSizes(q: Float64Array, skip: Uint8Array, below: number, parent: Int32Array, size: Uint32Array): void {
	for (let t = 0; t < q.length; t++) if (!skip[t] && q[t] < below) size[findRoot(parent, t)]++;
}

/** Sliver faces in clusters of at least min faces whose shortest edge is under tiny. */
function tinyEdgeSlivers(p: Float64Array, idx: Uint32Array, q: Float64Array, skip: Uint8Array, below: number, parent: Int32Array, size: Uint32Array, min: number, tiny: number): number {
	const tiny2 = tiny * tiny;
	let n = 0;
	for (let t = 0; t < q.length; t++) {
		if (skip[t] || !(q[t] < below) || size[findRoot(parent, t)] < min) continue;
		const a = 3 * idx[3 * t], b = 3 * idx[3 * t + 1], c = 3 * idx[3 * t + 2];
		const ab = (p[a] - p[b]) ** 2 + (p[a + 1] - p[b + 1]) ** 2 + (p[a + 2] - p[b + 2]) ** 2;
		const bc = (p[b] - p[c]) ** 2 + (p[b + 1] - p[c + 1]) ** 2 + (p[b + 2] - p[c + 2]) ** 2;
		const ca = (p[c] - p[a]) ** 2 + (p[c + 1] - p[a + 1]) ** 2 + (p[c + 2] - p[a + 2]) ** 2;
		if (Math.min(ab, bc, ca) < tiny2) n++;
	}
	return n;
}

function countAtLeast(a: Uint32Array, min: number): number {
	let n = 0;
	for (let i = 0; i < a.length; i++) if (a[i] >= min) n++;
	return n;
}

function sumAtLeast(a: Uint32Array, min: number): number {
	let n = 0;
	for (let i = 0; i < a.length; i++) if (a[i] >= min) n += a[i];
	return n;
}
