/** Test and bench helpers for the repair operations: format round trips, defect injection, outside checks. */
import { readMesh } from '../read';
import { writeBinaryStl, writeObj, writePly } from '../write';
import { inspectMesh } from '../inspect';
import { marchingCubes, gridFor } from './marching-cubes';
import { asParsed, concat, flipFaces, icosphere, withoutFaces } from './test-meshes';
import type { ImplicitShape } from './implicit-shapes';
import type { InspectionReport } from '../report-types';
import type { MeshBuffers, ParsedMesh } from '../types';

export const FORMATS: [string, (m: MeshBuffers) => Uint8Array, string][] = [
	['binary STL', (m) => writeBinaryStl(m), 'part.stl'],
	['binary PLY', (m) => writePly(m, 'binary-le'), 'part.ply'],
	['OBJ', (m) => writeObj(m), 'part.obj']
];

/** Written with write.ts and read back with readMesh. */
export function roundTrip(m: MeshBuffers, write: (m: MeshBuffers) => Uint8Array, fileName: string): ParsedMesh {
	return readMesh(write(m), fileName);
}

export function inspect(m: MeshBuffers, minEdgeLength = 0): InspectionReport {
	return inspectMesh(asParsed(m), { minEdgeLength, rasterCells: 64 });
}

export function implicitMesh(shape: ImplicitShape, cell: number): MeshBuffers {
	return marchingCubes(shape.field, gridFor(shape.min, shape.max, cell));
}

function centroidDist2(m: MeshBuffers, t: number, c: [number, number, number]): number {
	let d = 0;
	for (let k = 0; k < 3; k++) {
		const a = m.positions[3 * m.indices[3 * t] + k], b = m.positions[3 * m.indices[3 * t + 1] + k], e = m.positions[3 * m.indices[3 * t + 2] + k];
		const x = (a + b + e) / 3 - c[k];
		d += x * x;
	}
	return d;
}

/** Faces whose centroid lies within radius of centre. */
export function facesNear(m: MeshBuffers, centre: [number, number, number], radius: number): number[] {
	const out: number[] = [];
	for (let t = 0; t < m.indices.length / 3; t++) if (centroidDist2(m, t, centre) < radius * radius) out.push(t);
	return out;
}

/** Nearest surface point of the mesh's vertices to a direction from the origin (for placing defects). */
export function surfacePoint(m: MeshBuffers, dir: [number, number, number]): [number, number, number] {
	let best = -Infinity, bv = 0;
	const l = Math.hypot(...dir);
	for (let v = 0; v < m.positions.length / 3; v++) {
		const s = (m.positions[3 * v] * dir[0] + m.positions[3 * v + 1] * dir[1] + m.positions[3 * v + 2] * dir[2]) / l;
		if (s > best) (best = s), (bv = v);
	}
	return [m.positions[3 * bv], m.positions[3 * bv + 1], m.positions[3 * bv + 2]];
}

/**
 * Opens a seam: faces with centroid x > x0 get their own copies of the vertices they share with
 * the other side, moved by `offset` along +y (a crack a weld should close).
 */
export function openSeam(m: MeshBuffers, x0: number, offset: number): MeshBuffers {
	const triCount = m.indices.length / 3, vertCount = m.positions.length / 3;
	const side = new Uint8Array(triCount);
	const usedLeft = new Uint8Array(vertCount), usedRight = new Uint8Array(vertCount);
	for (let t = 0; t < triCount; t++) {
		let cx = 0;
		for (let k = 0; k < 3; k++) cx += m.positions[3 * m.indices[3 * t + k]] / 3;
		side[t] = cx > x0 ? 1 : 0;
		for (let k = 0; k < 3; k++) (side[t] ? usedRight : usedLeft)[m.indices[3 * t + k]] = 1;
	}
	const copy = new Int32Array(vertCount).fill(-1);
	const pos = Array.from(m.positions);
	for (let v = 0; v < vertCount; v++) {
		if (usedLeft[v] && usedRight[v]) {
			copy[v] = pos.length / 3;
			pos.push(m.positions[3 * v], m.positions[3 * v + 1] + offset, m.positions[3 * v + 2]);
		}
	}
	const indices = m.indices.slice();
	for (let t = 0; t < triCount; t++) {
		if (!side[t]) continue;
		for (let k = 0; k < 3; k++) if (copy[indices[3 * t + k]] >= 0) indices[3 * t + k] = copy[indices[3 * t + k]];
	}
	return { positions: Float64Array.from(pos), indices };
}

/** Small closed icospheres (specks) at the given centres. */
export function specks(centres: [number, number, number][], r: number): MeshBuffers[] {
	return centres.map((c) => {
		const s = icosphere(1, r);
		for (let v = 0; v < s.positions.length / 3; v++) for (let k = 0; k < 3; k++) s.positions[3 * v + k] += c[k];
		return s;
	});
}

export interface ManifoldVerdict {
	status: string;
	volume: number;
	genus: number;
}

type ManifoldWasm = Awaited<ReturnType<typeof import('manifold-3d').default>>;

/**
 * manifold-3d's verdict: Mesh.merge() then new Manifold(mesh); status 'NoError' means it accepts
 * the mesh as a closed 2-manifold. The Manifold is freed before returning.
 */
export function manifoldVerdict(wasm: ManifoldWasm, m: MeshBuffers): ManifoldVerdict {
	const mesh = new wasm.Mesh({ numProp: 3, vertProperties: Float32Array.from(m.positions), triVerts: Uint32Array.from(m.indices) });
	mesh.merge();
	let solid: InstanceType<ManifoldWasm['Manifold']> | null = null;
	try {
		solid = new wasm.Manifold(mesh);
		return { status: solid.status(), volume: solid.volume(), genus: solid.genus() };
	} catch (e) {
		return { status: `threw: ${(e as Error).message ?? String(e)}`, volume: NaN, genus: NaN };
	} finally {
		solid?.delete();
	}
}

export interface DefectiveMesh {
	/** The closed marching-cubes mesh before any defect. */
	clean: MeshBuffers;
	/** Same surface with holes, a flipped patch, an opened seam and floating specks. */
	broken: MeshBuffers;
	/** Faces removed for the holes, and faces flipped. */
	holeFaces: number;
	flippedFaces: number;
}

/**
 * Marching-cubes surface of `shape` at `cell`, then: three holes (faces within 2 cells of three
 * surface points), a flipped patch (within 3 cells of a fourth), a seam at x = 0 opened by
 * `seamOffset` along y, and three specks of radius 0.15 cells floating off the surface.
 */
export function defectiveMesh(shape: ImplicitShape, cell: number, seamOffset = 1e-7): DefectiveMesh {
	const clean = implicitMesh(shape, cell);
	const holes = [
		...facesNear(clean, surfacePoint(clean, [0.3, 0.2, 1]), 2 * cell),
		...facesNear(clean, surfacePoint(clean, [1, 0.1, -0.1]), 2 * cell),
		...facesNear(clean, surfacePoint(clean, [-0.7, -0.6, -0.3]), 2 * cell)
	];
	const holed = withoutFaces(clean, holes);
	const flip = facesNear(holed, surfacePoint(holed, [0.2, 1, 0.1]), 3 * cell);
	const flipped = flipFaces(holed, flip);
	const seamed = openSeam(flipped, 0, seamOffset);
	const far = (d: [number, number, number]): [number, number, number] => {
		const s = surfacePoint(clean, d);
		const l = Math.hypot(...s);
		return [s[0] * (1 + 0.3 / l), s[1] * (1 + 0.3 / l), s[2] * (1 + 0.3 / l)];
	};
	const broken = concat(seamed, ...specks([far([0, -1, 1]), far([-1, 1, 0]), far([0.5, -0.5, -1])], 0.15 * cell));
	return { clean, broken, holeFaces: holes.length, flippedFaces: flip.length };
}
