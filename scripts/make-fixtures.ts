/**
 * Writes the tiny sample meshes in fixtures/ (run: npx tsx scripts/make-fixtures.ts). Each file is
 * named after what it shows; the reader tests pin their counts.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { writeAsciiStl, writeBinaryStl, writeObj, writePly } from '../src/lib/mesh/write';
import { torus } from '../src/lib/mesh/testing/test-meshes';

const dir = join(import.meta.dirname, '..', 'fixtures');
mkdirSync(dir, { recursive: true });
const put = (name: string, data: Uint8Array | string) => writeFileSync(join(dir, name), data);

// Unit cube, 8 corners, 12 triangles CCW seen from outside; triangles 2k, 2k+1 form side k.
const cubePositions = new Float64Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0, 0, 0, 1, 1, 0, 1, 1, 1, 1, 0, 1, 1]);
const cubeQuads = [
	[0, 3, 2, 1], // bottom z=0
	[4, 5, 6, 7], // top z=1
	[0, 1, 5, 4], // y=0
	[1, 2, 6, 5], // x=1
	[2, 3, 7, 6], // y=1
	[3, 0, 4, 7] // x=0
];
const cubeIndices = new Uint32Array(cubeQuads.flatMap(([a, b, c, d]) => [a, b, c, a, c, d]));
const cube = { positions: cubePositions, indices: cubeIndices };

put('cube-closed.stl', writeBinaryStl(cube, 'solid cube: binary STL whose header starts with solid'));
put('cube-closed-ascii.stl', writeAsciiStl(cube));
put('cube-one-face-missing.stl', writeBinaryStl({ positions: cubePositions, indices: cubeIndices.slice(0, 30) }));
put(
	'cube-two-solids-ascii.stl',
	writeAsciiStl(cube, [
		{ name: 'lid', firstFace: 0, faceCount: 4 },
		{ name: 'walls', firstFace: 4, faceCount: 8 }
	])
);
put('cube-closed-binary-le.ply', writePly(cube, 'binary-le'));

const v = (p: Float64Array) => Array.from({ length: p.length / 3 }, (_, i) => `${p[3 * i]} ${p[3 * i + 1]} ${p[3 * i + 2]}`);

put(
	'cube-quads.ply',
	['ply', 'format ascii 1.0', 'comment six quads, fan-split on reading', 'obj_info sensor pod test block',
		'element vertex 8', 'property float x', 'property float y', 'property float z',
		'element face 6', 'property list uchar int vertex_indices', 'end_header',
		...v(cubePositions), ...cubeQuads.map((q) => `4 ${q.join(' ')}`), ''].join('\n')
);

// Big-endian binary with properties around x,y,z, ushort-counted short indices, and an extra
// element with its own list, which the reader must skip by width.
{
	const header =
		['ply', 'format binary_big_endian 1.0', 'comment big-endian cube with extra properties',
			'element vertex 8', 'property uchar quality', 'property float x', 'property double nx',
			'property float y', 'property float z', 'property uchar red',
			'element face 12', 'property uchar flags', 'property list ushort short vertex_indices',
			'element edge 2', 'property list uint int vertex_pair', 'property float crease',
			'end_header'].join('\n') + '\n';
	const h = new TextEncoder().encode(header);
	const out = new Uint8Array(h.length + 8 * 22 + 12 * (1 + 2 + 6) + 2 * (4 + 8 + 4));
	out.set(h);
	const dv = new DataView(out.buffer);
	let o = h.length;
	for (let i = 0; i < 8; i++) {
		dv.setUint8(o, 200); o += 1;
		dv.setFloat32(o, cubePositions[3 * i]); o += 4;
		dv.setFloat64(o, 0.5); o += 8;
		dv.setFloat32(o, cubePositions[3 * i + 1]); o += 4;
		dv.setFloat32(o, cubePositions[3 * i + 2]); o += 4;
		dv.setUint8(o, 7); o += 1;
	}
	for (let t = 0; t < 12; t++) {
		dv.setUint8(o, 1); o += 1;
		dv.setUint16(o, 3); o += 2;
		for (let k = 0; k < 3; k++) { dv.setInt16(o, cubeIndices[3 * t + k]); o += 2; }
	}
	for (let e = 0; e < 2; e++) {
		dv.setUint32(o, 2); o += 4;
		dv.setInt32(o, e); o += 4;
		dv.setInt32(o, e + 1); o += 4;
		dv.setFloat32(o, 1); o += 4;
	}
	put('cube-binary-be.ply', out);
}

// OBJ with o/g regions, every face-vertex form and negative (relative) indices.
put(
	'cube-regions.obj',
	['# cube in three regions: 4 + 4 + 4 triangles, written as quads', 'mtllib pod.mtl', ...v(cubePositions).map((s) => `v ${s}`),
		'vt 0 0', 'vt 1 0', 'vt 1 1', 'vn 0 0 1', 's off',
		'o lid', 'usemtl grey', 'f 1/1 4/2 3/3 2/1', 'f 5/1/1 6/2/1 7/3/1 8/1/1',
		'g walls-y', 'f 1//1 2//1 6//1 5//1', 'f -6 -5 -1 -2',
		'g walls-x', 'f 2 3 7 6', 'f 4/1/1 1/2/1 5/3/1 8/1/1', ''].join('\n')
);

// Cube with each side on its own four vertices: closed in shape, open in connectivity.
{
	const pos: number[] = [];
	const ix: number[] = [];
	for (const q of cubeQuads) {
		const b = pos.length / 3;
		for (const c of q) pos.push(cubePositions[3 * c], cubePositions[3 * c + 1], cubePositions[3 * c + 2]);
		ix.push(b, b + 1, b + 2, b, b + 2, b + 3);
	}
	put('cube-unwelded-sides.obj', writeObj({ positions: new Float64Array(pos), indices: new Uint32Array(ix) }));
}

// Tow body: a 12-sided cylinder of 4 rings (length 6, radius 0.5) with pointed ends, one side
// panel of the middle bay removed (two triangles): one hole bounded by 4 edges.
{
	const seg = 12, rings = 4;
	const pos: number[] = [];
	for (let r = 0; r < rings; r++) {
		for (let s = 0; s < seg; s++) {
			const a = (2 * Math.PI * s) / seg;
			pos.push(1 + (4 * r) / (rings - 1), Math.round(0.5 * Math.cos(a) * 1e6) / 1e6, Math.round(0.5 * Math.sin(a) * 1e6) / 1e6);
		}
	}
	const nose = pos.length / 3;
	pos.push(0, 0, 0);
	const tail = nose + 1;
	pos.push(6, 0, 0);
	const ix: number[] = [];
	for (let r = 0; r + 1 < rings; r++) {
		for (let s = 0; s < seg; s++) {
			const a = r * seg + s, b = r * seg + ((s + 1) % seg), c = (r + 1) * seg + ((s + 1) % seg), d = (r + 1) * seg + s;
			if (r === 1 && s === 0) continue; // the hole
			ix.push(a, b, c, a, c, d);
		}
	}
	for (let s = 0; s < seg; s++) {
		ix.push(nose, (s + 1) % seg, s);
		ix.push(tail, (rings - 1) * seg + s, (rings - 1) * seg + ((s + 1) % seg));
	}
	const triCount = ix.length / 3;
	put(
		'tow-body-hole.obj',
		writeObj({ positions: new Float64Array(pos), indices: new Uint32Array(ix) }, [
			{ name: 'hull', firstFace: 0, faceCount: triCount - 2 * seg },
			{ name: 'end-caps', firstFace: triCount - 2 * seg, faceCount: 2 * seg }
		])
	);
}

// Pentagonal prism: two 5-gon caps and five quad sides, all fan-split.
{
	const pos: number[] = [];
	for (let z = 0; z < 2; z++) for (let s = 0; s < 5; s++) {
		const a = (2 * Math.PI * s) / 5;
		pos.push(Math.round(Math.cos(a) * 1e6) / 1e6, Math.round(Math.sin(a) * 1e6) / 1e6, z);
	}
	const lines = ['# keel bulb stand-in: pentagonal prism, 2 pentagons + 5 quads', ...v(new Float64Array(pos)).map((s) => `v ${s}`),
		'f 5 4 3 2 1', 'f 6 7 8 9 10'];
	for (let s = 0; s < 5; s++) {
		const a = s + 1, b = ((s + 1) % 5) + 1;
		lines.push(`f ${a} ${b} ${b + 5} ${a + 5}`);
	}
	put('pentagon-prism.obj', lines.join('\n') + '\n');
}

console.log('fixtures written to', dir);

// Closed icosphere (radius 20, two subdivisions: 162 vertices, 320 faces, CCW seen from outside)
// with its top vertex pushed down through the opposite side: still one closed, manifold, outward
// shell, but its faces cross the bottom. The gate must hold it for self-intersections alone.
{
	const t = (1 + Math.sqrt(5)) / 2;
	const pts: number[][] = [[-1, t, 0], [1, t, 0], [-1, -t, 0], [1, -t, 0], [0, -1, t], [0, 1, t], [0, -1, -t], [0, 1, -t], [t, 0, -1], [t, 0, 1], [-t, 0, -1], [-t, 0, 1]];
	let faces = [[0, 11, 5], [0, 5, 1], [0, 1, 7], [0, 7, 10], [0, 10, 11], [1, 5, 9], [5, 11, 4], [11, 10, 2], [10, 7, 6], [7, 1, 8], [3, 9, 4], [3, 4, 2], [3, 2, 6], [3, 6, 8], [3, 8, 9], [4, 9, 5], [2, 4, 11], [6, 2, 10], [8, 6, 7], [9, 8, 1]];
	for (let s = 0; s < 2; s++) {
		const mid = new Map<string, number>();
		const m = (a: number, b: number) => {
			const key = a < b ? `${a},${b}` : `${b},${a}`;
			let i = mid.get(key);
			if (i === undefined) {
				i = pts.push(pts[a].map((c, k) => (c + pts[b][k]) / 2)) - 1;
				mid.set(key, i);
			}
			return i;
		};
		faces = faces.flatMap(([a, b, c]) => {
			const ab = m(a, b), bc = m(b, c), ca = m(c, a);
			return [[a, ab, ca], [b, bc, ab], [c, ca, bc], [ab, bc, ca]];
		});
	}
	const positions = new Float64Array(pts.flatMap((p) => { const l = Math.hypot(...p); return p.map((c) => (20 * c) / l); }));
	let top = 0;
	for (let i = 1; i < pts.length; i++) if (positions[3 * i + 1] > positions[3 * top + 1]) top = i;
	positions[3 * top + 1] = -26; // 6 below the bottom pole at y = -20
	put('sphere-vertex-pushed-through.stl', writeBinaryStl({ positions, indices: new Uint32Array(faces.flat()) }));
}

// A ring housing (torus R = 40, r = 12, 32 × 12 quads) written as OBJ in four quarter patches that
// each keep their own vertices: the seams between the patches are not welded. Welded it is one
// closed shell of genus 1; as written it reads as four open shells.
{
	const ring = torus(32, 12, 40, 12);
	const pos = Array.from(ring.positions);
	const idx = Array.from(ring.indices);
	const faces = idx.length / 3;
	for (let q = 1; q < 4; q++) {
		const copy = new Map<number, number>();
		for (let c = (3 * faces * q) / 4; c < (3 * faces * (q + 1)) / 4; c++) {
			let w = copy.get(idx[c]);
			if (w === undefined) {
				w = pos.length / 3;
				pos.push(pos[3 * idx[c]], pos[3 * idx[c] + 1], pos[3 * idx[c] + 2]);
				copy.set(idx[c], w);
			}
			idx[c] = w;
		}
	}
	put('ring-housing-unwelded-seams.obj', writeObj({ positions: Float64Array.from(pos), indices: Uint32Array.from(idx) }));
}

// Two equal blocks, 20 × 10 × 10 each, 0.01 apart along x: closed, clean, and a gap far below any
// cell size a pod project uses.
{
	const block = (x0: number) => {
		const p = cubePositions.map((c, i) => (i % 3 === 0 ? x0 + 20 * c : 10 * c));
		return p;
	};
	const a = block(0), b = block(20.01);
	const positions = new Float64Array([...a, ...b]);
	const tri = cubeQuads.flatMap(([p, q, r, s]) => [[p, q, r], [p, r, s]]);
	const indices = new Uint32Array([...tri.flat(), ...tri.flat().map((v) => v + 8)]);
	put('blocks-0.01-apart.stl', writeBinaryStl({ positions, indices }));
}

// A 40 × 20 × 10 block whose top face was triangulated with a vertex in the middle of its front
// edge while the front face was not: a T-junction slit (no area, nothing missing), as CAD faces
// triangulated one by one leave it.
{
	const V = [[0, 0, 0], [40, 0, 0], [40, 20, 0], [0, 20, 0], [0, 0, 10], [40, 0, 10], [40, 20, 10], [0, 20, 10], [20, 0, 10]];
	const f = [[0, 3, 2], [0, 2, 1], [0, 1, 5], [0, 5, 4], [3, 7, 6], [3, 6, 2], [0, 4, 7], [0, 7, 3], [1, 2, 6], [1, 6, 5], [4, 8, 7], [8, 6, 7], [8, 5, 6]];
	put('block-t-junction.stl', writeBinaryStl({ positions: Float64Array.from(V.flat()), indices: Uint32Array.from(f.flat()) }));
}
