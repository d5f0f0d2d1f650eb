/** Small generated meshes for tests and the bench: cube, icosphere, torus, voxel solids, Möbius strip. */
import type { MeshBuffers, ParsedMesh } from '../types';

export function asParsed(m: MeshBuffers, format: ParsedMesh['format'] = 'stl-binary'): ParsedMesh {
	return {
		positions: m.positions,
		indices: m.indices,
		format,
		regions: [],
		stats: { weldedVertices: 0, duplicatePositions: 0, polygonsSplit: 0, facesDeclared: m.indices.length / 3, skippedStatements: 0 }
	};
}

/** Unit cube [0,1]³, 12 triangles, CCW seen from outside. */
export function unitCube(offset: [number, number, number] = [0, 0, 0]): MeshBuffers {
	const p: number[] = [];
	for (let i = 0; i < 8; i++) p.push((i & 1) + offset[0], ((i >> 1) & 1) + offset[1], ((i >> 2) & 1) + offset[2]);
	// prettier-ignore
	const f = [
		0, 2, 1, 1, 2, 3, // z = 0, normal −z
		4, 5, 6, 5, 7, 6, // z = 1
		0, 1, 4, 1, 5, 4, // y = 0
		2, 6, 3, 3, 6, 7, // y = 1
		0, 4, 2, 2, 4, 6, // x = 0
		1, 3, 5, 3, 7, 5  // x = 1
	];
	return { positions: Float64Array.from(p), indices: Uint32Array.from(f) };
}

export function concat(...ms: MeshBuffers[]): MeshBuffers {
	let nv = 0, ni = 0;
	for (const m of ms) (nv += m.positions.length), (ni += m.indices.length);
	const positions = new Float64Array(nv), indices = new Uint32Array(ni);
	let ov = 0, oi = 0;
	for (const m of ms) {
		positions.set(m.positions, ov);
		for (let i = 0; i < m.indices.length; i++) indices[oi + i] = m.indices[i] + ov / 3;
		ov += m.positions.length;
		oi += m.indices.length;
	}
	return { positions, indices };
}

export function withoutFaces(m: MeshBuffers, faces: number[]): MeshBuffers {
	const drop = new Set(faces);
	const out: number[] = [];
	for (let t = 0; t < m.indices.length / 3; t++) if (!drop.has(t)) out.push(m.indices[3 * t], m.indices[3 * t + 1], m.indices[3 * t + 2]);
	return { positions: m.positions, indices: Uint32Array.from(out) };
}

export function flipFaces(m: MeshBuffers, faces: number[]): MeshBuffers {
	const indices = m.indices.slice();
	for (const t of faces) {
		const x = indices[3 * t + 1];
		indices[3 * t + 1] = indices[3 * t + 2];
		indices[3 * t + 2] = x;
	}
	return { positions: m.positions, indices };
}

/**
 * Icosphere of radius r: icosahedron with each triangle split into 4, k times, vertices pushed to
 * the sphere. Midpoints are shared through a numeric edge key, so the result is welded.
 */
export function icosphere(k: number, r = 1): MeshBuffers {
	const t = (1 + Math.sqrt(5)) / 2;
	// prettier-ignore
	let pos: number[] = [-1, t, 0, 1, t, 0, -1, -t, 0, 1, -t, 0, 0, -1, t, 0, 1, t, 0, -1, -t, 0, 1, -t, t, 0, -1, t, 0, 1, -t, 0, -1, -t, 0, 1];
	// prettier-ignore
	let tri: number[] = [0, 11, 5, 0, 5, 1, 0, 1, 7, 0, 7, 10, 0, 10, 11, 1, 5, 9, 5, 11, 4, 11, 10, 2, 10, 7, 6, 7, 1, 8,
		3, 9, 4, 3, 4, 2, 3, 2, 6, 3, 6, 8, 3, 8, 9, 4, 9, 5, 2, 4, 11, 6, 2, 10, 8, 6, 7, 9, 8, 1];
	const norm = (i: number) => {
		const l = Math.hypot(pos[3 * i], pos[3 * i + 1], pos[3 * i + 2]);
		pos[3 * i] *= r / l;
		pos[3 * i + 1] *= r / l;
		pos[3 * i + 2] *= r / l;
	};
	for (let i = 0; i < 12; i++) norm(i);
	for (let level = 0; level < k; level++) {
		const mid = new Map<number, number>();
		const nv = pos.length / 3;
		const m = (a: number, b: number) => {
			const key = a < b ? a * nv + b : b * nv + a;
			let i = mid.get(key);
			if (i === undefined) {
				i = pos.length / 3;
				pos.push((pos[3 * a] + pos[3 * b]) / 2, (pos[3 * a + 1] + pos[3 * b + 1]) / 2, (pos[3 * a + 2] + pos[3 * b + 2]) / 2);
				norm(i);
				mid.set(key, i);
			}
			return i;
		};
		const next: number[] = [];
		for (let f = 0; f < tri.length; f += 3) {
			const a = tri[f], b = tri[f + 1], c = tri[f + 2];
			const ab = m(a, b), bc = m(b, c), ca = m(c, a);
			next.push(a, ab, ca, b, bc, ab, c, ca, bc, ab, bc, ca);
		}
		tri = next;
	}
	return { positions: Float64Array.from(pos), indices: Uint32Array.from(tri) };
}

/** Parametric torus (major R, minor r), n × m quads split in two, outward normals. */
export function torus(n: number, m: number, R = 2, r = 0.5): MeshBuffers {
	const pos = new Float64Array(3 * n * m);
	const idx = new Uint32Array(6 * n * m);
	for (let i = 0; i < n; i++) {
		const u = (2 * Math.PI * i) / n;
		for (let j = 0; j < m; j++) {
			const v = (2 * Math.PI * j) / m;
			const o = 3 * (i * m + j);
			pos[o] = (R + r * Math.cos(v)) * Math.cos(u);
			pos[o + 1] = (R + r * Math.cos(v)) * Math.sin(u);
			pos[o + 2] = r * Math.sin(v);
		}
	}
	let w = 0;
	for (let i = 0; i < n; i++) {
		for (let j = 0; j < m; j++) {
			const a = i * m + j, b = ((i + 1) % n) * m + j, c = ((i + 1) % n) * m + ((j + 1) % m), d = i * m + ((j + 1) % m);
			idx[w++] = a;
			idx[w++] = b;
			idx[w++] = c;
			idx[w++] = a;
			idx[w++] = c;
			idx[w++] = d;
		}
	}
	return { positions: pos, indices: idx };
}

/**
 * Boundary surface of a set of unit voxels: one quad (two triangles) per filled/empty cell face,
 * corners shared, normals outward. Manifold as long as no two voxels touch only along an edge or corner.
 */
export function voxelSurface(nx: number, ny: number, nz: number, filled: (x: number, y: number, z: number) => boolean): MeshBuffers {
	const at = (x: number, y: number, z: number) =>
		x >= 0 && y >= 0 && z >= 0 && x < nx && y < ny && z < nz && filled(x, y, z);
	const vid = (x: number, y: number, z: number) => x + (nx + 1) * (y + (ny + 1) * z);
	const pos = new Float64Array(3 * (nx + 1) * (ny + 1) * (nz + 1));
	for (let z = 0; z <= nz; z++)
		for (let y = 0; y <= ny; y++)
			for (let x = 0; x <= nx; x++) {
				const o = 3 * vid(x, y, z);
				pos[o] = x;
				pos[o + 1] = y;
				pos[o + 2] = z;
			}
	const idx: number[] = [];
	const quad = (a: number, b: number, c: number, d: number) => idx.push(a, b, c, a, c, d);
	for (let z = 0; z < nz; z++)
		for (let y = 0; y < ny; y++)
			for (let x = 0; x < nx; x++) {
				if (!at(x, y, z)) continue;
				if (!at(x - 1, y, z)) quad(vid(x, y, z), vid(x, y, z + 1), vid(x, y + 1, z + 1), vid(x, y + 1, z));
				if (!at(x + 1, y, z)) quad(vid(x + 1, y, z), vid(x + 1, y + 1, z), vid(x + 1, y + 1, z + 1), vid(x + 1, y, z + 1));
				if (!at(x, y - 1, z)) quad(vid(x, y, z), vid(x + 1, y, z), vid(x + 1, y, z + 1), vid(x, y, z + 1));
				if (!at(x, y + 1, z)) quad(vid(x, y + 1, z), vid(x, y + 1, z + 1), vid(x + 1, y + 1, z + 1), vid(x + 1, y + 1, z));
				if (!at(x, y, z - 1)) quad(vid(x, y, z), vid(x, y + 1, z), vid(x + 1, y + 1, z), vid(x + 1, y, z));
				if (!at(x, y, z + 1)) quad(vid(x, y, z + 1), vid(x + 1, y, z + 1), vid(x + 1, y + 1, z + 1), vid(x, y + 1, z + 1));
			}
	return compact({ positions: pos, indices: Uint32Array.from(idx) });
}

/** Drop unreferenced vertices. */
export function compact(m: MeshBuffers): MeshBuffers {
	const nv = m.positions.length / 3;
	const map = new Int32Array(nv).fill(-1);
	let n = 0;
	for (let i = 0; i < m.indices.length; i++) if (map[m.indices[i]] < 0) map[m.indices[i]] = n++;
	const positions = new Float64Array(3 * n);
	for (let v = 0; v < nv; v++) if (map[v] >= 0) positions.set(m.positions.subarray(3 * v, 3 * v + 3), 3 * map[v]);
	const indices = new Uint32Array(m.indices.length);
	for (let i = 0; i < indices.length; i++) indices[i] = map[m.indices[i]];
	return { positions, indices };
}

/** Plate of (2g + 1) × 3 × 1 voxels with g square holes through it: closed, orientable, genus g. */
export function plateWithHoles(g: number): MeshBuffers {
	return voxelSurface(2 * g + 1, 3, 1, (x, y) => !(y === 1 && x % 2 === 1));
}

/** Möbius strip: n quads around, one half twist, width w. Non-orientable, one boundary loop. */
export function mobiusStrip(n = 24, R = 2, w = 0.5): MeshBuffers {
	const pos: number[] = [];
	for (let i = 0; i < n; i++) {
		const u = (2 * Math.PI * i) / n;
		for (const s of [-w, w]) {
			const c = Math.cos(u / 2) * s;
			pos.push((R + c) * Math.cos(u), (R + c) * Math.sin(u), Math.sin(u / 2) * s);
		}
	}
	const idx: number[] = [];
	for (let i = 0; i < n; i++) {
		const a = 2 * i, b = 2 * i + 1;
		// After a full turn the strip's two sides swap: vertex 2i+1 meets 0 and 2i meets 1.
		const last = i === n - 1;
		const c = last ? 1 : 2 * (i + 1), d = last ? 0 : 2 * (i + 1) + 1;
		idx.push(a, c, b, b, c, d);
	}
	return { positions: Float64Array.from(pos), indices: Uint32Array.from(idx) };
}

/** Merge vertices with exactly equal coordinates (test helper; string keys are fine at this size). */
export function weldExact(m: MeshBuffers): MeshBuffers {
	const seen = new Map<string, number>();
	const pos: number[] = [];
	const map: number[] = [];
	for (let v = 0; v < m.positions.length / 3; v++) {
		const key = `${m.positions[3 * v]},${m.positions[3 * v + 1]},${m.positions[3 * v + 2]}`;
		let i = seen.get(key);
		if (i === undefined) {
			i = pos.length / 3;
			pos.push(m.positions[3 * v], m.positions[3 * v + 1], m.positions[3 * v + 2]);
			seen.set(key, i);
		}
		map.push(i);
	}
	return { positions: Float64Array.from(pos), indices: Uint32Array.from(m.indices, (i) => map[i]) };
}
