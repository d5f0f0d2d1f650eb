/**
 * OBJ reader: `v` and `f` (v, v/vt, v//vn, v/vt/vn; negative = relative), polygons fan-split (concave
 * ones split again by ear clipping once the vertices are known: polygons.ts),
 * `o`/`g` names as regions (contiguous face runs; faces before any o/g form "default"). Every
 * other statement (vt, vn, usemtl, s, l, …) is skipped and counted. Scans the bytes line by line
 * (see text-scan.ts); only names are decoded to strings.
 */
import { SplitPolygons, splitConcavePolygons } from './polygons';
import { DEFAULT_MAX_FACES, MeshReadError, type MeshRegion, type ParsedMesh, type ReadOptions } from './types';
import { countDuplicatePositions } from './weld';
import {
	MAX_LINE_BYTES, NOT_A_NUMBER, NOT_FINITE, checkFaceLimit, decodeRange, fmt, growF64, growU32, parseNumber,
	quoteToken, tokenEnd
} from './text-scan';

const isBlank = (c: number): boolean => c === 32 || c === 9 || c === 13 || c === 11 || c === 12;

export function parseObj(bytes: Uint8Array, opts: ReadOptions = {}): ParsedMesh {
	const maxFaces = opts.maxFaces ?? DEFAULT_MAX_FACES;
	const end = bytes.length;
	if (end === 0) throw new MeshReadError('the OBJ file is empty');
	const numErr = { err: 0 };
	// A vertex line takes at least 8 bytes ("v 0 0 0\n"); start at a fraction of that and grow.
	let positions = new Float64Array(3 * (Math.ceil(end / 64) + 16));
	let vertCount = 0;
	let indices = new Uint32Array(3 * (Math.ceil(end / 64) + 16));
	let triCount = 0;
	let corners = new Uint32Array(64);
	let polygonsSplit = 0;
	const polygons = new SplitPolygons();
	let faceStatements = 0;
	let skipped = 0;
	let maxRef = 0;
	let maxRefLine = 0;
	const regions: MeshRegion[] = [];
	let regionName = 'default';
	let regionFirst = 0;

	let p = end >= 3 && bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf ? 3 : 0;
	let line = 0;
	while (p < end) {
		let eol = bytes.indexOf(10, p);
		if (eol < 0) eol = end;
		line++;
		if (eol - p > MAX_LINE_BYTES) throw new MeshReadError(`OBJ line ${fmt(line)} is longer than ${fmt(MAX_LINE_BYTES)} bytes: not an OBJ text file?`);
		while (p < eol && isBlank(bytes[p])) p++;
		if (p >= eol) { p = eol + 1; continue; }
		const c0 = bytes[p];
		const c1 = p + 1 < eol ? bytes[p + 1] : 32;
		if (c0 === 35) { p = eol + 1; continue; }
		if (c0 === 118 && isBlank(c1)) {
			// v x y z [w | r g b]: the first three numbers are the position.
			p += 2;
			if (3 * vertCount + 3 > positions.length) positions = growF64(positions, 3 * vertCount + 3);
			for (let k = 0; k < 3; k++) {
				while (p < eol && isBlank(bytes[p])) p++;
				if (p >= eol) throw new MeshReadError(`OBJ line ${fmt(line)}: vertex needs three coordinates`);
				const e = tokenEnd(bytes, p, eol);
				numErr.err = 0;
				const v = parseNumber(bytes, p, e, numErr);
				if (numErr.err === NOT_FINITE) {
					throw new MeshReadError(`OBJ line ${fmt(line)}: vertex ${fmt(vertCount + 1)} has a non-finite ${'xyz'[k]} coordinate ${quoteToken(bytes, p, e)}`);
				}
				if (numErr.err === NOT_A_NUMBER) throw new MeshReadError(`OBJ line ${fmt(line)}: expected a coordinate, found ${quoteToken(bytes, p, e)}`);
				positions[3 * vertCount + k] = v;
				p = e;
			}
			vertCount++;
		} else if (c0 === 102 && isBlank(c1)) {
			p += 2;
			let n = 0;
			for (;;) {
				while (p < eol && isBlank(bytes[p])) p++;
				if (p >= eol) break;
				const start = p;
				let neg = false;
				if (bytes[p] === 45) { neg = true; p++; }
				let v = 0;
				let digits = 0;
				while (p < eol) {
					const d = bytes[p] - 48;
					if (d < 0 || d > 9) break;
					if (v < 1e15) v = v * 10 + d;
					digits++;
					p++;
				}
				const stop = p < eol ? bytes[p] : 32;
				if (digits === 0 || (stop !== 47 && !isBlank(stop))) {
					throw new MeshReadError(`OBJ line ${fmt(line)}: bad face vertex ${quoteToken(bytes, start, tokenEnd(bytes, start, eol))}`);
				}
				if (stop === 47) p = tokenEnd(bytes, p, eol);
				let idx: number;
				if (v === 0) {
					throw new MeshReadError(`OBJ line ${fmt(line)}: face refers to vertex 0, but OBJ vertex numbers start at 1`);
				} else if (neg) {
					if (v > vertCount) {
						throw new MeshReadError(
							`OBJ line ${fmt(line)}: relative face index -${fmt(v)} reaches before the first vertex (${fmt(vertCount)} defined so far)`
						);
					}
					idx = vertCount - v;
				} else {
					// Forward references are checked once all vertices are known.
					if (v > maxRef) { maxRef = v; maxRefLine = line; }
					idx = v - 1;
				}
				if (n >= corners.length) corners = growU32(corners, n + 1);
				corners[n++] = idx;
			}
			if (n < 3) throw new MeshReadError(`OBJ line ${fmt(line)}: face has ${n} ${n === 1 ? 'vertex' : 'vertices'}; a face needs at least 3`);
			faceStatements++;
			const tris = n - 2;
			if (tris > 1) {
				polygonsSplit++;
				polygons.add(triCount, n);
			}
			if (triCount + tris > maxFaces) checkFaceLimit(triCount + tris, maxFaces, 'OBJ');
			if (3 * (triCount + tris) > indices.length) indices = growU32(indices, 3 * (triCount + tris));
			let o = 3 * triCount;
			const a = corners[0];
			for (let i = 1; i <= tris; i++, o += 3) {
				indices[o] = a;
				indices[o + 1] = corners[i];
				indices[o + 2] = corners[i + 1];
			}
			triCount += tris;
		} else if ((c0 === 111 || c0 === 103) && isBlank(c1)) {
			if (triCount > regionFirst) regions.push({ name: regionName, firstFace: regionFirst, faceCount: triCount - regionFirst });
			regionName = decodeRange(bytes, p + 1, eol).trim() || 'default';
			regionFirst = triCount;
		} else {
			skipped++;
		}
		p = eol + 1;
	}
	if (triCount > regionFirst) regions.push({ name: regionName, firstFace: regionFirst, faceCount: triCount - regionFirst });
	if (maxRef > vertCount) {
		throw new MeshReadError(`OBJ line ${fmt(maxRefLine)}: face refers to vertex ${fmt(maxRef)} of ${fmt(vertCount)}`);
	}
	if (triCount === 0) throw new MeshReadError(`OBJ file holds no faces ('f' lines): there is no surface to inspect`);
	const pos = positions.slice(0, 3 * vertCount);
	const tri = indices.slice(0, 3 * triCount);
	splitConcavePolygons(pos, tri, polygons);
	return {
		format: 'obj',
		positions: pos,
		indices: tri,
		regions,
		stats: {
			weldedVertices: 0,
			duplicatePositions: countDuplicatePositions(pos, vertCount),
			polygonsSplit,
			facesDeclared: faceStatements,
			skippedStatements: skipped
		}
	};
}
