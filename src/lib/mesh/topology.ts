/**
 * Connectivity facts of a triangle soup over its edge table: shells, boundary loops, non-manifold
 * edges and vertices, orientation. Exact (indices only), O(H α(H)) with union-find over faces and
 * over face corners; scratch is allocated once per call.
 */
import { MeshReadError } from './types';
import { firstIndexOutOfRange } from './validate';
import { buildEdges, nextHalfedge as nextHalfedgeImport, NO_EDGE, type EdgeTable } from './edges';

// Bound once (see predicates.ts: some loaders make each use of an import a getter call).
const nextHalfedge = nextHalfedgeImport;

export interface LoopTable {
	loopCount: number;
	/** Per loop: number of boundary edges. */
	edgeCount: Uint32Array;
	/** Per loop: shell index. */
	shell: Int32Array;
	/** Per loop: 1 when the walk ended at an unpaired boundary-edge end (an open chain, rare). */
	open: Uint8Array;
	/** Loop l's edges are loopEdges[loopStart[l] .. loopStart[l + 1]), in walk order. */
	loopStart: Uint32Array;
	loopEdges: Uint32Array;
	/** Vertex where each listed edge is entered, parallel to loopEdges. */
	loopVerts: Uint32Array;
}

export interface ShellTable {
	shellCount: number;
	/** Shell of each face; −1 for skipped faces. */
	faceShell: Int32Array;
	faces: Uint32Array;
	vertices: Uint32Array;
	edges: Uint32Array;
	boundaryEdges: Uint32Array;
	boundaryLoops: Uint32Array;
	nonManifoldEdges: Uint32Array;
	nonManifoldVertices: Uint32Array;
	/** 1 when 2-colouring over manifold edges met no conflict. */
	orientable: Uint8Array;
	inconsistentEdges: Uint32Array;
	flippedFaces: Uint32Array;
}

export interface TopologyResult {
	edges: EdgeTable;
	/** Faces taking part (not skipped). */
	activeFaces: number;
	referencedVertices: number;
	boundaryEdges: number;
	nonManifoldEdges: number;
	nonManifoldVertices: number;
	/** Edges whose halfedges are not balanced in direction (once each way for a 2-face edge). */
	inconsistentEdges: number;
	duplicateFaces: number;
	/** 1 for faces that repeat an earlier face's vertex set (any order). */
	duplicateFace: Uint8Array;
	/** 1 for faces that would be flipped by the minimal per-patch flip set. */
	flipFace: Uint8Array;
	/** Number of fans around each vertex (saturates at 255); 0 for unreferenced vertices. */
	vertexFans: Uint8Array;
	shells: ShellTable;
	loops: LoopTable;
}

function find(parent: Int32Array, x: number): number {
	while (parent[x] !== x) {
		const g = parent[parent[x]];
		parent[x] = g;
		x = g;
	}
	return x;
}

function union(parent: Int32Array, a: number, b: number): void {
	a = find(parent, a);
	b = find(parent, b);
	if (a === b) return;
	// Smaller index as root keeps roots stable and makes results independent of visit order.
	if (a < b) parent[b] = a;
	else parent[a] = b;
}

/** Faces with a repeated vertex index (collapsed): they carry no surface and take no part. */
export function collapsedFaces(indices: Uint32Array): { mask: Uint8Array; count: number } {
	const mask = new Uint8Array((indices.length / 3) | 0);
	return { mask, count: markCollapsed(indices, mask) };
}

function markCollapsed(indices: Uint32Array, mask: Uint8Array): number {
	const triCount = mask.length;
	let count = 0;
	for (let t = 0, t3 = 0; t < triCount; t++, t3 += 3) {
		const a = indices[t3], b = indices[t3 + 1], c = indices[t3 + 2];
		if (a === b || b === c || a === c) {
			mask[t] = 1;
			count++;
		}
	}
	return count;
}

// Each loop below is a function of its own that returns its result or stores it inside the loop: in
// a fresh process V8 optimises a long loop while it runs, and code after the loop that has not run
// yet (no type feedback) would make V8 drop that code at the loop's exit and compile again.

/**
 * BFS over one patch from `seed` across two-face edges, 2-colouring its faces (colour 1 = flip;
 * neighbours running their shared edge the same way get different colours). Faces land in
 * queue[0 .. tail); acc[0] counts colour-1 faces, acc[1] is set on a colouring conflict. Returns tail.
 */
function colourPatch(
	seed: number,
	patch: number,
	indices: Uint32Array,
	heOpp: Int32Array,
	colour: Int8Array,
	patchOf: Int32Array,
	queue: Int32Array,
	acc: Int32Array
): number {
	let head = 0, tail = 0;
	queue[tail++] = seed;
	colour[seed] = 0;
	patchOf[seed] = patch;
	acc[0] = 0;
	acc[1] = 0;
	while (head < tail) {
		const f = queue[head++];
		const cf = colour[f];
		for (let k = 0; k < 3; k++) {
			const h = 3 * f + k;
			const o = heOpp[h];
			if (o < 0) continue; // boundary or non-manifold: no orientation constraint
			const g = (o / 3) | 0;
			// Same start vertex = same direction = one of the two must flip.
			const want = indices[o] === indices[h] ? cf ^ 1 : cf;
			if (colour[g] < 0) {
				colour[g] = want;
				patchOf[g] = patch;
				if (want) acc[0]++;
				queue[tail++] = g;
			} else if (colour[g] !== want) acc[1] = 1;
		}
	}
	return tail;
}

/** Marks the patch's smaller colour class (colour 1 when flipOnes) in flipFace. */
function markFlips(queue: Int32Array, tail: number, colour: Int8Array, flipOnes: boolean, flipFace: Uint8Array): void {
	for (let i = 0; i < tail; i++) {
		const f = queue[i];
		if ((colour[f] === 1) === flipOnes) flipFace[f] = 1;
	}
}

function countBoundaryEdges(edgeStart: Uint32Array, edgeCount: number): number {
	let n1 = 0;
	for (let e = 0; e < edgeCount; e++) if (edgeStart[e + 1] - edgeStart[e] === 1) n1++;
	return n1;
}

/** Joins the patches meeting at each non-manifold edge; returns the number of such edges. */
function joinAtNonManifold(edgeStart: Uint32Array, edgeCount: number, heSorted: Uint32Array, patchOf: Int32Array, patchParent: Int32Array): number {
	let nonManifold = 0;
	for (let e = 0; e < edgeCount; e++) {
		const s = edgeStart[e], n = edgeStart[e + 1] - s;
		if (n < 3) continue;
		nonManifold++;
		const p0 = patchOf[(heSorted[s] / 3) | 0];
		for (let i = 1; i < n; i++) union(patchParent, p0, patchOf[(heSorted[s + i] / 3) | 0]);
	}
	return nonManifold;
}

/** Shell of each patch, numbered by root order; returns the shell count. */
function numberShells(patchParent: Int32Array, patchCount: number, shellOfPatch: Int32Array): number {
	let shellCount = 0;
	for (let i = 0; i < patchCount; i++) {
		const r = find(patchParent, i);
		shellOfPatch[i] = r === i ? shellCount++ : shellOfPatch[r];
	}
	return shellCount;
}

/** patchOf becomes faceShell in place (−1 stays −1 for skipped faces); counts faces per shell. */
function faceShellsInPlace(patchOf: Int32Array, triCount: number, shellOfPatch: Int32Array, sFaces: Uint32Array): void {
	for (let t = 0; t < triCount; t++) {
		const p = patchOf[t];
		if (p < 0) continue;
		const sh = shellOfPatch[p];
		patchOf[t] = sh;
		sFaces[sh]++;
	}
}

/**
 * Edges, boundary edges, non-manifold edges and inconsistent edges per shell; returns the number
 * of inconsistent edges.
 */
function edgesPerShell(
	indices: Uint32Array,
	et: EdgeTable,
	faceShell: Int32Array,
	sEdges: Uint32Array,
	sBoundary: Uint32Array,
	sNmEdges: Uint32Array,
	sInconsistent: Uint32Array
): number {
	const { edgeCount, edgeStart, heSorted, edgeLo } = et;
	let inconsistentEdges = 0;
	for (let e = 0; e < edgeCount; e++) {
		const s = edgeStart[e], n = edgeStart[e + 1] - s;
		const h0 = heSorted[s];
		const sh = faceShell[(h0 / 3) | 0];
		sEdges[sh]++;
		if (n === 1) {
			sBoundary[sh]++;
			continue;
		}
		let bad: boolean;
		if (n === 2) bad = indices[h0] === indices[heSorted[s + 1]];
		else {
			sNmEdges[sh]++;
			let forward = 0;
			for (let i = 0; i < n; i++) if (indices[heSorted[s + i]] === edgeLo[e]) forward++;
			bad = 2 * forward !== n;
		}
		if (bad) {
			inconsistentEdges++;
			sInconsistent[sh]++;
		}
	}
	return inconsistentEdges;
}

function identity(parent: Int32Array, n: number): void {
	for (let c = 0; c < n; c++) parent[c] = c;
}

/** Unions face corners across each two-face edge. */
function joinCornersAtTwoFaceEdges(indices: Uint32Array, heOpp: Int32Array, heCount: number, cornerParent: Int32Array): void {
	for (let h = 0; h < heCount; h++) {
		const o = heOpp[h];
		if (o < h) continue; // each two-face edge once; boundary and non-manifold below
		const v = indices[h];
		const hn = nextHalfedge(h), on = nextHalfedge(o);
		// Consistent neighbours run o from w to v; flipped ones from v to w.
		if (indices[o] === v) {
			union(cornerParent, h, o);
			union(cornerParent, hn, on);
		} else {
			union(cornerParent, h, on);
			union(cornerParent, hn, o);
		}
	}
}

/** Unions the face corners at each end of every non-manifold edge. */
function joinCornersAtNonManifold(indices: Uint32Array, et: EdgeTable, cornerParent: Int32Array): void {
	const { edgeCount, edgeStart, heSorted, edgeLo } = et;
	for (let e = 0; e < edgeCount; e++) {
		const s = edgeStart[e], n = edgeStart[e + 1] - s;
		if (n < 3) continue;
		const lo = edgeLo[e];
		const h0 = heSorted[s];
		const lo0 = indices[h0] === lo ? h0 : nextHalfedge(h0);
		const hi0 = indices[h0] === lo ? nextHalfedge(h0) : h0;
		for (let i = 1; i < n; i++) {
			const h = heSorted[s + i];
			const startIsLo = indices[h] === lo;
			union(cornerParent, lo0, startIsLo ? h : nextHalfedge(h));
			union(cornerParent, hi0, startIsLo ? nextHalfedge(h) : h);
		}
	}
}

/** Counts fan roots per vertex into vertexFans (saturating at 255). */
function countFans(indices: Uint32Array, heCount: number, skipFace: Uint8Array, cornerParent: Int32Array, vertexFans: Uint8Array): void {
	for (let c = 0; c < heCount; c++) {
		if (skipFace[(c / 3) | 0]) continue;
		if (find(cornerParent, c) === c) {
			const v = indices[c];
			if (vertexFans[v] < 255) vertexFans[v]++;
		}
	}
}

/** Vertices with more than `below` fans. */
function countVerticesAbove(vertexFans: Uint8Array, vertCount: number, below: number): number {
	let n = 0;
	for (let v = 0; v < vertCount; v++) if (vertexFans[v] > below) n++;
	return n;
}

/**
 * Vertices per shell (sVerts) over fan roots, and pinch vertices inside one shell (sNmVerts): a
 * vertex with several fans may have them in different shells (two cubes touching at a corner:
 * each cube alone is manifold). Returns the position of the first corner left for pinchCorners
 * (a root at a vertex of several fans), or heCount.
 */
function plainFanRoots(indices: Uint32Array, from: number, heCount: number, skipFace: Uint8Array, cornerParent: Int32Array, vertexFans: Uint8Array, faceShell: Int32Array, sVerts: Uint32Array): number {
	for (let c = from; c < heCount; c++) {
		if (cornerParent[c] !== c || skipFace[(c / 3) | 0]) continue;
		if (vertexFans[indices[c]] !== 1) return c;
		sVerts[faceShell[(c / 3) | 0]]++;
	}
	return heCount;
}

/** One fan root c at a vertex of several fans: counts it by (vertex, shell) in pinchSeen. */
function pinchCorner(indices: Uint32Array, c: number, faceShell: Int32Array, shellCount: number, pinchSeen: Map<number, number>, sVerts: Uint32Array, sNmVerts: Uint32Array): void {
	const sh = faceShell[(c / 3) | 0];
	const key = indices[c] * shellCount + sh;
	const seen = pinchSeen.get(key) ?? 0;
	if (seen === 0) sVerts[sh]++;
	else if (seen === 1) sNmVerts[sh]++;
	pinchSeen.set(key, seen + 1);
}

/**
 * Boundary loops. Each boundary edge has two ends (slot 2i at lo, 2i + 1 at hi, i its boundary
 * number); ends in the same fan are paired, so loops pass correctly through pinch vertices.
 */
function boundaryLoops(indices: Uint32Array, et: EdgeTable, boundaryEdges: number, heCount: number, cornerParent: Int32Array, faceShell: Int32Array, sLoops: Uint32Array): LoopTable {
	const { edgeCount, edgeStart, heSorted, edgeLo, edgeHi } = et;
	const bEdge = new Uint32Array(boundaryEdges);
	const partner = new Int32Array(2 * boundaryEdges).fill(-1);
	const visited = new Uint8Array(boundaryEdges);
	const loopEdges = new Uint32Array(boundaryEdges);
	const loopVerts = new Uint32Array(boundaryEdges);
	const loopStartList: number[] = [0];
	const loopShellList: number[] = [];
	const loopOpenList: number[] = [];
	if (boundaryEdges > 0) {
		for (let e = 0, i = 0; e < edgeCount; e++) if (edgeStart[e + 1] - edgeStart[e] === 1) bEdge[i++] = e;
		// Fan root corner → unpaired end slot. Allocated only for an open mesh: 12 bytes per face of
		// fresh pages is a noticeable share of a closed mesh's whole topology pass.
		const pending = new Int32Array(heCount).fill(-1);
		for (let i = 0; i < boundaryEdges; i++) {
			const e = bEdge[i];
			const h = heSorted[edgeStart[e]];
			const startIsLo = indices[h] === edgeLo[e];
			const cLo = find(cornerParent, startIsLo ? h : nextHalfedge(h));
			const cHi = find(cornerParent, startIsLo ? nextHalfedge(h) : h);
			for (let end = 0; end < 2; end++) {
				const root = end === 0 ? cLo : cHi;
				const slot = 2 * i + end;
				const p = pending[root];
				if (p < 0) pending[root] = slot;
				else {
					partner[slot] = p;
					partner[p] = slot;
					pending[root] = -1;
				}
			}
		}
		let written = 0;
		for (let i0 = 0; i0 < boundaryEdges; i0++) {
			if (visited[i0]) continue;
			// If this edge lies on an open chain, first walk back to the chain's end so the whole chain is one loop.
			let startI = i0, startSlotIn = 2 * i0;
			{
				let i = i0, inSlot = 2 * i0;
				for (;;) {
					const p = partner[inSlot];
					if (p < 0) {
						startI = i;
						startSlotIn = inSlot;
						break;
					}
					const j = p >> 1;
					if (j === i0) break;
					i = j;
					inSlot = p ^ 1;
				}
			}
			let i = startI, inSlot = startSlotIn, open = 0;
			for (;;) {
				visited[i] = 1;
				const e = bEdge[i];
				loopEdges[written] = e;
				loopVerts[written] = (inSlot & 1) === 0 ? edgeLo[e] : edgeHi[e];
				written++;
				const outSlot = inSlot ^ 1;
				const p = partner[outSlot];
				if (p < 0) {
					open = 1;
					break;
				}
				const j = p >> 1;
				if (visited[j]) break;
				i = j;
				inSlot = p;
			}
			loopStartList.push(written);
			const sh = faceShell[(heSorted[edgeStart[bEdge[startI]]] / 3) | 0];
			loopShellList.push(sh);
			loopOpenList.push(open);
			sLoops[sh]++;
		}
	}
	const loopCount = loopShellList.length;
	const loopStart = Uint32Array.from(loopStartList);
	const loopEdgeCount = new Uint32Array(loopCount);
	for (let l = 0; l < loopCount; l++) loopEdgeCount[l] = loopStart[l + 1] - loopStart[l];
	return {
		loopCount,
		edgeCount: loopEdgeCount,
		shell: Int32Array.from(loopShellList),
		open: Uint8Array.from(loopOpenList),
		loopStart,
		loopEdges,
		loopVerts
	};
}

/**
 * Duplicate faces over two-face edges: same vertex set, any order. Two such faces share the edge
 * joining their two smallest vertices and have the same third vertex; on a two-face edge that is
 * one comparison. Returns how many were marked.
 */
function duplicatesAtTwoFaceEdges(indices: Uint32Array, triCount: number, skipFace: Uint8Array, heOpp: Int32Array, duplicateFace: Uint8Array): number {
	let duplicateFaces = 0;
	for (let t = 0; t < triCount; t++) {
		if (skipFace[t]) continue;
		const t3 = 3 * t;
		const a = indices[t3], b = indices[t3 + 1], c = indices[t3 + 2];
		// Halfedge opposite the largest vertex joins the two smallest.
		let hk: number, top: number;
		if (a > b && a > c) (hk = t3 + 1), (top = a);
		else if (b > c) (hk = t3 + 2), (top = b);
		else (hk = t3), (top = c);
		const o = heOpp[hk];
		if (o < 0) continue; // boundary: no twin; non-manifold: handled below
		if (o < hk && indices[o % 3 === 0 ? o + 2 : o - 1] === top) {
			duplicateFace[t] = 1;
			duplicateFaces++;
		}
	}
	return duplicateFaces;
}

/** Non-manifold edges: among faces whose two smallest vertices are this edge, repeated third vertices. */
function duplicatesAtNonManifold(indices: Uint32Array, et: EdgeTable, duplicateFace: Uint8Array): number {
	const { edgeCount, edgeStart, heSorted, edgeHi } = et;
	const thirdSeen = new Set<number>();
	let duplicateFaces = 0;
	for (let e = 0; e < edgeCount; e++) {
		const s = edgeStart[e], n = edgeStart[e + 1] - s;
		if (n < 3) continue;
		thirdSeen.clear();
		const hi = edgeHi[e];
		for (let i = 0; i < n; i++) {
			const o = heSorted[s + i];
			const third = indices[o % 3 === 0 ? o + 2 : o - 1];
			if (third < hi) continue; // this face's two smallest are not (lo, hi)
			if (thirdSeen.has(third)) {
				duplicateFace[(o / 3) | 0] = 1;
				duplicateFaces++;
			} else thirdSeen.add(third);
		}
	}
	return duplicateFaces;
}

/** stageMs, if given, receives milliseconds per internal step (for the bench). */
export function analyseTopology(
	indices: Uint32Array,
	vertCount: number,
	skipFace: Uint8Array,
	stageMs?: Record<string, number>
): TopologyResult {
	let tMark = performance.now();
	const mark = (name: string) => {
		if (!stageMs) return;
		const now = performance.now();
		stageMs[name] = now - tMark;
		tMark = now;
	};
	const triCount = (indices.length / 3) | 0;
	const heCount = 3 * triCount;
	const bad = firstIndexOutOfRange(indices, vertCount);
	if (bad >= 0) {
		throw new MeshReadError(`face ${(bad / 3) | 0} refers to vertex ${indices[bad]}, but there are only ${vertCount} vertices`);
	}
	const et = buildEdges(indices, vertCount, skipFace);
	const { edgeCount, edgeStart, heSorted, heOpp } = et;

	mark('edges');
	// Orientation and patches: BFS over faces across two-face edges, 2-colouring them. Each BFS
	// patch keeps its smaller colour class as its flip set. Patches joined across non-manifold edges
	// form the shells.
	const colour = new Int8Array(triCount).fill(-1);
	// Sized for every halfedge although the BFS uses one slot per face: the buffer becomes the corner
	// union-find below, so those pages are faulted in once (fresh pages are the dearer part here).
	const queue = new Int32Array(Math.max(1, heCount));
	const flipFace = new Uint8Array(triCount);
	const patchOf = new Int32Array(triCount).fill(-1);
	const patchFlips: number[] = [];
	const patchConflict: number[] = [];
	const acc = new Int32Array(2);
	let activeFaces = 0;
	for (let seed = 0; seed < triCount; seed++) {
		if (skipFace[seed] || colour[seed] >= 0) continue;
		const tail = colourPatch(seed, patchFlips.length, indices, heOpp, colour, patchOf, queue, acc);
		const ones = acc[0];
		activeFaces += tail;
		const flipOnes = ones <= tail - ones;
		markFlips(queue, tail, colour, flipOnes, flipFace);
		patchFlips.push(flipOnes ? ones : tail - ones);
		patchConflict.push(acc[1]);
	}
	mark('orientation');

	// Shells: patches joined through non-manifold edges (union-find over patches, smaller id as root).
	const patchCount = patchFlips.length;
	const patchParent = new Int32Array(patchCount);
	identity(patchParent, patchCount);
	const boundaryEdges = countBoundaryEdges(edgeStart, edgeCount);
	const nonManifoldEdges = joinAtNonManifold(edgeStart, edgeCount, heSorted, patchOf, patchParent);
	// Patches are numbered by their smallest face, and roots are the smallest patch, so shells come
	// out numbered by their smallest face.
	const shellOfPatch = new Int32Array(patchCount);
	const shellCount = numberShells(patchParent, patchCount, shellOfPatch);
	const sFaces = new Uint32Array(shellCount);
	const sVerts = new Uint32Array(shellCount);
	const sEdges = new Uint32Array(shellCount);
	const sBoundary = new Uint32Array(shellCount);
	const sLoops = new Uint32Array(shellCount);
	const sNmEdges = new Uint32Array(shellCount);
	const sNmVerts = new Uint32Array(shellCount);
	const sOrientable = new Uint8Array(shellCount).fill(1);
	const sInconsistent = new Uint32Array(shellCount);
	const sFlipped = new Uint32Array(shellCount);
	// patchOf is not read after this, so it becomes faceShell in place.
	const faceShell = patchOf;
	faceShellsInPlace(patchOf, triCount, shellOfPatch, sFaces);
	for (let i = 0; i < patchCount; i++) {
		const sh = shellOfPatch[i];
		sFlipped[sh] += patchFlips[i];
		if (patchConflict[i]) sOrientable[sh] = 0;
	}
	const inconsistentEdges = edgesPerShell(indices, et, faceShell, sEdges, sBoundary, sNmEdges, sInconsistent);
	mark('shells');

	// Fans: union face corners around each vertex through the edges they share there.
	// Corner c = 3t + k sits at vertex indices[c]; halfedge h starts at corner h, ends at corner next(h).
	const cornerParent = queue.subarray(0, heCount);
	identity(cornerParent, heCount);
	joinCornersAtTwoFaceEdges(indices, heOpp, heCount, cornerParent);
	joinCornersAtNonManifold(indices, et, cornerParent);
	const vertexFans = new Uint8Array(vertCount);
	countFans(indices, heCount, skipFace, cornerParent, vertexFans);
	const referencedVertices = countVerticesAbove(vertexFans, vertCount, 0);
	const nonManifoldVertices = countVerticesAbove(vertexFans, vertCount, 1);
	mark('fans');
	// Vertices per shell, and pinch vertices inside one shell.
	const pinchSeen = new Map<number, number>();
	for (let c = plainFanRoots(indices, 0, heCount, skipFace, cornerParent, vertexFans, faceShell, sVerts); c < heCount; c = plainFanRoots(indices, c + 1, heCount, skipFace, cornerParent, vertexFans, faceShell, sVerts)) {
		pinchCorner(indices, c, faceShell, shellCount, pinchSeen, sVerts, sNmVerts);
	}

	mark('pinch');
	const loops = boundaryLoops(indices, et, boundaryEdges, heCount, cornerParent, faceShell, sLoops);

	mark('loops');
	const duplicateFace = new Uint8Array(triCount);
	const duplicateFaces = duplicatesAtTwoFaceEdges(indices, triCount, skipFace, heOpp, duplicateFace) + duplicatesAtNonManifold(indices, et, duplicateFace);

	mark('duplicates');
	return {
		edges: et,
		activeFaces,
		referencedVertices,
		boundaryEdges,
		nonManifoldEdges,
		nonManifoldVertices,
		inconsistentEdges,
		duplicateFaces,
		duplicateFace,
		flipFace,
		vertexFans,
		shells: {
			shellCount,
			faceShell,
			faces: sFaces,
			vertices: sVerts,
			edges: sEdges,
			boundaryEdges: sBoundary,
			boundaryLoops: sLoops,
			nonManifoldEdges: sNmEdges,
			nonManifoldVertices: sNmVerts,
			orientable: sOrientable,
			inconsistentEdges: sInconsistent,
			flippedFaces: sFlipped
		},
		loops
	};
}

export { NO_EDGE };
