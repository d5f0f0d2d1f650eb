/**
 * Boundary loops as chains of boundary halfedges (halfedges whose edge has no other face), each
 * following the winding of its faces: halfedge h runs indices[h] → indices[next(h)], and the next
 * halfedge of the loop leaves that end vertex. Where several boundary halfedges leave a vertex (a
 * pinch), the walk turns around the vertex through its faces to stay in the same fan. O(H).
 * Unlike topology.ts's loop table this needs the faces consistently wound near the boundary (the
 * repair recipe orients first); a chain that cannot be continued is marked open.
 */
import { nextHalfedge, type EdgeTable } from '../edges';

export interface HalfedgeLoops {
	loopCount: number;
	/** Loop l is loopHe[loopStart[l] .. loopStart[l + 1]), in walk order. */
	loopStart: Uint32Array;
	loopHe: Uint32Array;
	/** 1 when the walk stopped before coming back to its start. */
	open: Uint8Array;
}

export function boundaryHalfedgeLoops(indices: Uint32Array, vertCount: number, et: EdgeTable): HalfedgeLoops {
	const { edgeCount, edgeStart, heSorted, heEdge } = et;
	let bCount = 0;
	for (let e = 0; e < edgeCount; e++) if (edgeStart[e + 1] - edgeStart[e] === 1) bCount++;
	// Boundary halfedges bucketed by start vertex.
	const outStart = new Uint32Array(vertCount + 1);
	for (let e = 0; e < edgeCount; e++) {
		if (edgeStart[e + 1] - edgeStart[e] === 1) outStart[indices[heSorted[edgeStart[e]]] + 1]++;
	}
	for (let v = 0; v < vertCount; v++) outStart[v + 1] += outStart[v];
	const outHe = new Uint32Array(bCount);
	const fill = outStart.slice(0, vertCount);
	for (let e = 0; e < edgeCount; e++) {
		if (edgeStart[e + 1] - edgeStart[e] !== 1) continue;
		const h = heSorted[edgeStart[e]];
		outHe[fill[indices[h]]++] = h;
	}
	const isBoundary = (h: number) => {
		const e = heEdge[h];
		return edgeStart[e + 1] - edgeStart[e] === 1;
	};
	const used = new Set<number>(); // boundary halfedges already placed in a loop (few)
	const loopHe = new Uint32Array(bCount);
	const starts: number[] = [0];
	const open: number[] = [];
	let written = 0;
	for (let i0 = 0; i0 < bCount; i0++) {
		const h0 = outHe[i0];
		if (used.has(h0)) continue;
		let h = h0, closed = false;
		for (;;) {
			used.add(h);
			loopHe[written++] = h;
			const b = indices[nextHalfedge(h)];
			let nextH = -1;
			const s = outStart[b], e = outStart[b + 1];
			if (e - s === 1) nextH = outHe[s];
			else if (e - s > 1) {
				// Turn around b through the faces of h's fan until a boundary halfedge leaves b.
				let g = h;
				for (let steps = 0; steps < 1024; steps++) {
					const out = nextHalfedge(g); // leaves b in g's face
					if (isBoundary(out)) {
						nextH = out;
						break;
					}
					const ed = heEdge[out];
					if (edgeStart[ed + 1] - edgeStart[ed] !== 2) break;
					const twin = heSorted[edgeStart[ed]] === out ? heSorted[edgeStart[ed] + 1] : heSorted[edgeStart[ed]];
					if (indices[nextHalfedge(twin)] !== b) break; // inconsistent winding: cannot turn
					g = twin;
				}
				if (nextH < 0) for (let k = s; k < e; k++) if (!used.has(outHe[k])) { nextH = outHe[k]; break; }
			}
			if (nextH === h0) {
				closed = true;
				break;
			}
			if (nextH < 0 || used.has(nextH)) break;
			h = nextH;
		}
		starts.push(written);
		open.push(closed ? 0 : 1);
	}
	return { loopCount: open.length, loopStart: Uint32Array.from(starts), loopHe, open: Uint8Array.from(open) };
}
