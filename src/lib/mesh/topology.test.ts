import { describe, expect, it } from 'vitest';
import { analyseTopology, collapsedFaces } from './topology';
import { mulberry32 } from './testing/implicit-shapes';
import { icosphere, torus } from './testing/test-meshes';

function randomSoup(seed: number, vertCount: number, triCount: number): Uint32Array {
	const rnd = mulberry32(seed);
	const idx = new Uint32Array(3 * triCount);
	for (let i = 0; i < idx.length; i++) idx[i] = Math.floor(rnd() * vertCount);
	return idx;
}

const faceVerts = (idx: Uint32Array, t: number) => [idx[3 * t], idx[3 * t + 1], idx[3 * t + 2]];
const edgeKey = (a: number, b: number) => `${Math.min(a, b)},${Math.max(a, b)}`;

/** Brute force: connected groups of `faces` where two faces are joined when they share an edge passing `through` (any edge if undefined). */
function groups(idx: Uint32Array, faces: number[], through?: number): number[][] {
	const seen = new Set<number>();
	const out: number[][] = [];
	const shares = (f: number, g: number) => {
		const a = faceVerts(idx, f), b = faceVerts(idx, g);
		const common = a.filter((v) => b.includes(v));
		if (new Set(common).size < 2) return false;
		return through === undefined || common.includes(through);
	};
	for (const f of faces) {
		if (seen.has(f)) continue;
		const group = [f];
		seen.add(f);
		for (let i = 0; i < group.length; i++) {
			for (const g of faces) if (!seen.has(g) && shares(group[i], g)) (seen.add(g), group.push(g));
		}
		out.push(group);
	}
	return out;
}

describe('topology against brute force on random soups', () => {
	it.each([11, 12, 13, 14])('agrees on shells, fans, boundary edges and duplicates (seed %i)', (seed) => {
		const V = 30;
		const idx = randomSoup(seed, V, 60);
		const { mask } = collapsedFaces(idx);
		const topo = analyseTopology(idx, V, mask);
		const live = [...Array(60).keys()].filter((t) => !mask[t]);

		// Shells: partition of live faces.
		const shells = groups(idx, live);
		expect(topo.shells.shellCount).toBe(shells.length);
		for (const g of shells) expect(new Set(g.map((t) => topo.shells.faceShell[t])).size).toBe(1);

		// Fans: per vertex, faces around it grouped through edges at that vertex.
		let pinched = 0;
		for (let v = 0; v < V; v++) {
			const around = live.filter((t) => faceVerts(idx, t).includes(v));
			const fans = around.length ? groups(idx, around, v).length : 0;
			expect(topo.vertexFans[v]).toBe(fans);
			if (fans > 1) pinched++;
		}
		expect(topo.nonManifoldVertices).toBe(pinched);

		// Boundary and non-manifold edges from a pair count.
		const uses = new Map<string, number>();
		for (const t of live) {
			const [a, b, c] = faceVerts(idx, t);
			for (const k of [edgeKey(a, b), edgeKey(b, c), edgeKey(c, a)]) uses.set(k, (uses.get(k) ?? 0) + 1);
		}
		expect(topo.boundaryEdges).toBe([...uses.values()].filter((n) => n === 1).length);
		expect(topo.nonManifoldEdges).toBe([...uses.values()].filter((n) => n >= 3).length);

		// Loops cover every boundary edge exactly once, and consecutive edges meet at a vertex.
		const { loopCount, loopStart, loopEdges } = topo.loops;
		const covered = new Set<number>();
		for (let l = 0; l < loopCount; l++) {
			for (let i = loopStart[l]; i < loopStart[l + 1]; i++) {
				expect(covered.has(loopEdges[i])).toBe(false);
				covered.add(loopEdges[i]);
				if (i + 1 < loopStart[l + 1]) {
					const e = loopEdges[i], f = loopEdges[i + 1];
					const ev = [topo.edges.edgeLo[e], topo.edges.edgeHi[e]], fv = [topo.edges.edgeLo[f], topo.edges.edgeHi[f]];
					expect(ev.some((v) => fv.includes(v))).toBe(true);
				}
			}
		}
		expect(covered.size).toBe(topo.boundaryEdges);

		// Duplicates: faces whose sorted vertex triple was seen before.
		const triples = new Set<string>();
		let dups = 0;
		for (const t of live) {
			const k = faceVerts(idx, t).sort((x, y) => x - y).join(',');
			if (triples.has(k)) dups++;
			else triples.add(k);
		}
		expect(topo.duplicateFaces).toBe(dups);
	});
});

describe('fewest faces to flip', () => {
	it.each([21, 22, 23])('finds min(|S|, F − |S|) after flipping a random set S of an icosphere (seed %i)', (seed) => {
		const m = icosphere(2);
		const rnd = mulberry32(seed);
		const F = m.indices.length / 3;
		const idx = m.indices.slice();
		let flipped = 0;
		const p = 0.1 + 0.8 * rnd(); // sometimes most faces flip: then flipping the rest is fewer
		for (let t = 0; t < F; t++) {
			if (rnd() < p) {
				[idx[3 * t + 1], idx[3 * t + 2]] = [idx[3 * t + 2], idx[3 * t + 1]];
				flipped++;
			}
		}
		const topo = analyseTopology(idx, m.positions.length / 3, new Uint8Array(F));
		expect(topo.shells.flippedFaces[0]).toBe(Math.min(flipped, F - flipped));
		expect(topo.shells.orientable[0]).toBe(1);
		// Flipping exactly the reported faces makes every edge consistent.
		for (let t = 0; t < F; t++) if (topo.flipFace[t]) [idx[3 * t + 1], idx[3 * t + 2]] = [idx[3 * t + 2], idx[3 * t + 1]];
		expect(analyseTopology(idx, m.positions.length / 3, new Uint8Array(F)).inconsistentEdges).toBe(0);
	});

	it('needs no flips on a consistent torus', () => {
		const m = torus(16, 8);
		const topo = analyseTopology(m.indices, m.positions.length / 3, new Uint8Array(m.indices.length / 3));
		expect(topo.shells.flippedFaces[0]).toBe(0);
		expect(topo.inconsistentEdges).toBe(0);
	});
});
