import { describe, expect, it } from 'vitest';
import { buildEdges, OPP_BOUNDARY, OPP_NON_MANIFOLD } from './edges';
import { analyseTopology, collapsedFaces } from './topology';
import { mulberry32 } from './testing/implicit-shapes';

/** Brute-force oracle: string-keyed map of undirected vertex pairs → halfedges. */
function oracle(indices: Uint32Array, skip?: Uint8Array): Map<string, number[]> {
	const m = new Map<string, number[]>();
	for (let h = 0; h < indices.length; h++) {
		if (skip && skip[(h / 3) | 0]) continue;
		const a = indices[h], b = indices[h % 3 === 2 ? h - 2 : h + 1];
		const key = `${Math.min(a, b)},${Math.max(a, b)}`;
		if (!m.has(key)) m.set(key, []);
		m.get(key)!.push(h);
	}
	return m;
}

function randomSoup(seed: number, vertCount: number, triCount: number): Uint32Array {
	const rnd = mulberry32(seed);
	const idx = new Uint32Array(3 * triCount);
	for (let i = 0; i < idx.length; i++) idx[i] = Math.floor(rnd() * vertCount);
	return idx;
}

describe('edge table', () => {
	it.each([1, 2, 3])('matches a brute-force pair map on a random soup (seed %i)', (seed) => {
		// Few vertices, many faces: lots of shared and non-manifold edges and repeated indices.
		const idx = randomSoup(seed, 40, 400);
		const { mask } = collapsedFaces(idx);
		const et = buildEdges(idx, 40, mask);
		const ref = oracle(idx, mask);
		expect(et.edgeCount).toBe(ref.size);
		for (let e = 0; e < et.edgeCount; e++) {
			const hs = Array.from(et.heSorted.subarray(et.edgeStart[e], et.edgeStart[e + 1]));
			expect(hs).toEqual(ref.get(`${et.edgeLo[e]},${et.edgeHi[e]}`));
			for (const h of hs) {
				expect(et.heEdge[h]).toBe(e);
				const want = hs.length === 1 ? OPP_BOUNDARY : hs.length === 2 ? hs[0] + hs[1] - h : OPP_NON_MANIFOLD;
				expect(et.heOpp[h]).toBe(want);
			}
		}
	});

	it('sorts a vertex of very high valence (a 5000-face fan) like the small buckets', () => {
		// Vertex 0 is every edge's smaller end, so its bucket takes the native-sort path.
		const n = 5000;
		const idx: number[] = [];
		for (let i = 0; i < n; i++) idx.push(0, 1 + ((i * 7919) % n), 1 + (((i * 7919) % n) + 1) % n);
		const indices = Uint32Array.from(idx);
		const et = buildEdges(indices, n + 1);
		expect(et.edgeCount).toBe(oracle(indices).size);
		for (let e = 1; e < et.edgeCount; e++) {
			const ordered = et.edgeLo[e - 1] < et.edgeLo[e] || (et.edgeLo[e - 1] === et.edgeLo[e] && et.edgeHi[e - 1] < et.edgeHi[e]);
			expect(ordered).toBe(true);
		}
		// The closed fan (a disk whose rim is a cycle) has one boundary loop of n edges.
		const topo = analyseTopology(indices, n + 1, new Uint8Array(n));
		expect(topo.loops.loopCount).toBe(1);
		expect(topo.boundaryEdges).toBe(n);
	});

	it('refuses a face that points past the vertex array, naming the face', () => {
		expect(() => analyseTopology(Uint32Array.from([0, 1, 7]), 3, new Uint8Array(1))).toThrow(/face 0 refers to vertex 7/);
	});
});
