/**
 * A tow body (about 480 mm long, millimetres) with one of each defect the viewer draws, for the dev
 * harness and the viewer's end-to-end test: two holes, a fin on one edge (non-manifold edge), a
 * tetrahedron touching the hull at one vertex (non-manifold vertex), a flipped patch, a collapsed
 * face, a floating cube and a small cube poking through the skin (self-intersections). Pure, seeded.
 */
import { gridFor, marchingCubes } from '../../mesh/testing/marching-cubes';
import { towBody } from '../../mesh/testing/implicit-shapes';
import type { MeshBuffers } from '../../mesh/types';

const SCALE = 100;

export function defectSampler(cell = 0.05, seed = 1): MeshBuffers {
	const shape = towBody(seed);
	const base = marchingCubes(shape.field, gridFor(shape.min, shape.max, cell));
	const pos: number[] = Array.from(base.positions, (x) => x * SCALE);
	const src = base.indices;
	const triCount = src.length / 3;
	const faces: number[] = [];
	const centre = (t: number, a: number) => (pos[3 * src[3 * t] + a] + pos[3 * src[3 * t + 1] + a] + pos[3 * src[3 * t + 2] + a]) / 3;
	const near = (t: number, c: [number, number, number], r: number) => Math.hypot(centre(t, 0) - c[0], centre(t, 1) - c[1], centre(t, 2) - c[2]) < r;
	let finFace = -1;
	for (let t = 0; t < triCount; t++) {
		// Holes: one near the tail, one on the upper side.
		if (near(t, [190, 0, 30], 9) || near(t, [-60, 20, 50], 6)) continue;
		let a = src[3 * t], b = src[3 * t + 1], c = src[3 * t + 2];
		// Flipped patch on the port side.
		if (near(t, [20, -58, 0], 10)) [b, c] = [c, b];
		if (finFace < 0 && near(t, [-120, 0, -48], 8)) finFace = faces.length / 3;
		faces.push(a, b, c);
	}
	const addVert = (x: number, y: number, z: number) => (pos.push(x, y, z), pos.length / 3 - 1);
	// Fin: a third face on one edge of the belly.
	if (finFace >= 0) {
		const a = faces[3 * finFace], b = faces[3 * finFace + 1];
		const tip = addVert(0.5 * (pos[3 * a] + pos[3 * b]), 0.5 * (pos[3 * a + 1] + pos[3 * b + 1]), 0.5 * (pos[3 * a + 2] + pos[3 * b + 2]) - 25);
		faces.push(a, b, tip);
	}
	// Tetrahedron hanging from one hull vertex: the vertex gets a second fan of faces.
	{
		let top = 0;
		for (let v = 1; v < base.positions.length / 3; v++) if (pos[3 * v + 2] > pos[3 * top + 2] && pos[3 * v] > 60) top = v;
		const x = pos[3 * top], y = pos[3 * top + 1], z = pos[3 * top + 2];
		const p1 = addVert(x + 10, y, z + 14), p2 = addVert(x - 5, y + 9, z + 14), p3 = addVert(x - 5, y - 9, z + 14);
		faces.push(top, p2, p1, top, p3, p2, top, p1, p3, p1, p2, p3);
	}
	// Collapsed face: a repeated corner.
	faces.push(faces[0], faces[0], faces[1]);
	const cube = (cx: number, cy: number, cz: number, h: number) => {
		const v0 = pos.length / 3;
		for (let i = 0; i < 8; i++) pos.push(cx + (i & 1 ? h : -h), cy + (i & 2 ? h : -h), cz + (i & 4 ? h : -h));
		// prettier-ignore
		const f = [0, 2, 1, 1, 2, 3, 4, 5, 6, 5, 7, 6, 0, 1, 4, 1, 5, 4, 2, 6, 3, 3, 6, 7, 0, 4, 2, 2, 4, 6, 1, 3, 5, 3, 7, 5];
		for (const k of f) faces.push(v0 + k);
	};
	// Floating cube above the hull, and a cube poking through the skin of the nose. Both small, so
	// that with the tetrahedron they stay specks (hints.smallShellIds: under 1 % of the area together).
	cube(0, 0, 110, 3);
	cube(0, 60, 0, 4);
	return { positions: Float64Array.from(pos), indices: Uint32Array.from(faces) };
}

/** Short-edge threshold that catches a visible handful of the sampler's edges (mm). */
export const SAMPLER_MIN_EDGE = 0.3;
