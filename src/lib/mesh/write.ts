/**
 * Mesh writers (binary/ASCII STL, PLY, OBJ) for export, fixtures, tests and benchmarks. Text
 * writers print coordinates with JavaScript's shortest round-trip form, so reading back gives the
 * same float64 values; binary STL rounds to float32 as the format requires.
 */
import type { MeshBuffers, MeshRegion } from './types';

const enc = new TextEncoder();

function faceNormal(p: Float64Array, a: number, b: number, c: number, out: Float64Array): void {
	const a3 = 3 * a, b3 = 3 * b, c3 = 3 * c;
	const ux = p[b3] - p[a3], uy = p[b3 + 1] - p[a3 + 1], uz = p[b3 + 2] - p[a3 + 2];
	const vx = p[c3] - p[a3], vy = p[c3 + 1] - p[a3 + 1], vz = p[c3 + 2] - p[a3 + 2];
	const nx = uy * vz - uz * vy, ny = uz * vx - ux * vz, nz = ux * vy - uy * vx;
	const len = Math.hypot(nx, ny, nz);
	const s = len > 0 ? 1 / len : 0;
	out[0] = nx * s;
	out[1] = ny * s;
	out[2] = nz * s;
}

/** Binary STL; `header` (ASCII, at most 80 bytes) defaults to a neutral one not starting with `solid`. */
export function writeBinaryStl(mesh: MeshBuffers, header = 'binary STL written by Shellgate'): Uint8Array {
	const p = mesh.positions, ix = mesh.indices;
	const triCount = ix.length / 3;
	const out = new Uint8Array(84 + 50 * triCount);
	out.set(enc.encode(header).subarray(0, 80));
	const dv = new DataView(out.buffer);
	dv.setUint32(80, triCount, true);
	const n = new Float64Array(3);
	for (let t = 0; t < triCount; t++) {
		const t3 = 3 * t;
		let o = 84 + 50 * t;
		faceNormal(p, ix[t3], ix[t3 + 1], ix[t3 + 2], n);
		dv.setFloat32(o, n[0], true);
		dv.setFloat32(o + 4, n[1], true);
		dv.setFloat32(o + 8, n[2], true);
		o += 12;
		for (let k = 0; k < 3; k++, o += 12) {
			const v3 = 3 * ix[t3 + k];
			dv.setFloat32(o, p[v3], true);
			dv.setFloat32(o + 4, p[v3 + 1], true);
			dv.setFloat32(o + 8, p[v3 + 2], true);
		}
	}
	return out;
}

/** ASCII STL; with regions, one `solid name` per region (regions must cover the faces in order). */
export function writeAsciiStl(mesh: MeshBuffers, regions?: MeshRegion[]): Uint8Array {
	const p = mesh.positions, ix = mesh.indices;
	const triCount = ix.length / 3;
	const runs = regions && regions.length ? regions : [{ name: 'mesh', firstFace: 0, faceCount: triCount }];
	const parts: string[] = [];
	const n = new Float64Array(3);
	for (const r of runs) {
		parts.push(`solid ${r.name}\n`);
		for (let t = r.firstFace; t < r.firstFace + r.faceCount; t++) {
			const t3 = 3 * t;
			faceNormal(p, ix[t3], ix[t3 + 1], ix[t3 + 2], n);
			let s = `  facet normal ${n[0]} ${n[1]} ${n[2]}\n    outer loop\n`;
			for (let k = 0; k < 3; k++) {
				const v3 = 3 * ix[t3 + k];
				s += `      vertex ${p[v3]} ${p[v3 + 1]} ${p[v3 + 2]}\n`;
			}
			parts.push(s + '    endloop\n  endfacet\n');
		}
		parts.push(`endsolid ${r.name}\n`);
	}
	return enc.encode(parts.join(''));
}

/** PLY with float64 vertices (`double x,y,z`) and `uchar uint` triangle lists. */
export function writePly(mesh: MeshBuffers, encoding: 'ascii' | 'binary-le' | 'binary-be'): Uint8Array {
	const p = mesh.positions, ix = mesh.indices;
	const vertCount = p.length / 3, triCount = ix.length / 3;
	const format = encoding === 'ascii' ? 'ascii' : encoding === 'binary-le' ? 'binary_little_endian' : 'binary_big_endian';
	const header = enc.encode(
		`ply\nformat ${format} 1.0\ncomment written by Shellgate\nelement vertex ${vertCount}\n` +
			`property double x\nproperty double y\nproperty double z\nelement face ${triCount}\n` +
			`property list uchar uint vertex_indices\nend_header\n`
	);
	if (encoding === 'ascii') {
		const parts: string[] = [];
		for (let v = 0; v < vertCount; v++) parts.push(`${p[3 * v]} ${p[3 * v + 1]} ${p[3 * v + 2]}\n`);
		for (let t = 0; t < triCount; t++) parts.push(`3 ${ix[3 * t]} ${ix[3 * t + 1]} ${ix[3 * t + 2]}\n`);
		const body = enc.encode(parts.join(''));
		const out = new Uint8Array(header.length + body.length);
		out.set(header);
		out.set(body, header.length);
		return out;
	}
	const le = encoding === 'binary-le';
	const out = new Uint8Array(header.length + 24 * vertCount + 13 * triCount);
	out.set(header);
	const dv = new DataView(out.buffer);
	let o = header.length;
	for (let i = 0; i < 3 * vertCount; i++, o += 8) dv.setFloat64(o, p[i], le);
	for (let t = 0; t < triCount; t++) {
		dv.setUint8(o, 3);
		dv.setUint32(o + 1, ix[3 * t], le);
		dv.setUint32(o + 5, ix[3 * t + 1], le);
		dv.setUint32(o + 9, ix[3 * t + 2], le);
		o += 13;
	}
	return out;
}

/** OBJ (`v`, `f` with 1-based indices); with regions, a `g name` line before each region's faces. */
export function writeObj(mesh: MeshBuffers, regions?: MeshRegion[]): Uint8Array {
	const p = mesh.positions, ix = mesh.indices;
	const vertCount = p.length / 3, triCount = ix.length / 3;
	const parts: string[] = ['# written by Shellgate\n'];
	for (let v = 0; v < vertCount; v++) parts.push(`v ${p[3 * v]} ${p[3 * v + 1]} ${p[3 * v + 2]}\n`);
	const starts = new Map<number, string>();
	for (const r of regions ?? []) starts.set(r.firstFace, r.name);
	for (let t = 0; t < triCount; t++) {
		const g = starts.get(t);
		if (g !== undefined) parts.push(`g ${g}\n`);
		parts.push(`f ${ix[3 * t] + 1} ${ix[3 * t + 1] + 1} ${ix[3 * t + 2] + 1}\n`);
	}
	return enc.encode(parts.join(''));
}
