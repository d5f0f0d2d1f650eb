/**
 * STL reader, binary and ASCII. Binary vs ASCII is decided by the size rule 84 + 50·n == file size,
 * not by a leading `solid` (many binary exporters write it into the 80-byte header). Corners are
 * welded by exact coordinate equality (weld.ts). Facet normals are ignored: winding defines outside.
 */
import { DEFAULT_MAX_FACES, MeshReadError, type MeshRegion, type ParsedMesh, type ReadOptions } from './types';
import { weldBinaryStlCorners, weldFloat64 } from './weld';
import {
	MAX_LINE_BYTES, NOT_A_NUMBER, NOT_FINITE, checkFaceLimit, decodeRange, fmt, growF64, parseNumber,
	quoteToken, tokenEnd
} from './text-scan';

/** Binary STL: 80-byte header, uint32 count, then 50 bytes per triangle (normal, 3 corners, attribute). */
export const STL_HEADER_BYTES = 84;
export const STL_TRIANGLE_BYTES = 50;

/** True when the size rule of binary STL holds exactly. */
export function isBinaryStlSize(bytes: Uint8Array): boolean {
	if (bytes.length < STL_HEADER_BYTES) return false;
	const n = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength).getUint32(80, true);
	return STL_HEADER_BYTES + STL_TRIANGLE_BYTES * n === bytes.length;
}

/** True when the file starts like ASCII STL: optional whitespace, `solid`, and text bytes only. */
export function looksLikeAsciiStl(bytes: Uint8Array): boolean {
	let p = 0;
	while (p < bytes.length && (bytes[p] === 32 || bytes[p] === 9 || bytes[p] === 10 || bytes[p] === 13)) p++;
	if (decodeRange(bytes, p, Math.min(bytes.length, p + 5)).toLowerCase() !== 'solid') return false;
	const end = Math.min(bytes.length, 1024);
	for (let i = 0; i < end; i++) {
		const c = bytes[i];
		if (c === 0 || (c < 32 && c !== 9 && c !== 10 && c !== 13 && c !== 11 && c !== 12)) return false;
	}
	return true;
}

export function parseStl(bytes: Uint8Array, opts: ReadOptions = {}): ParsedMesh {
	if (bytes.length === 0) throw new MeshReadError('the STL file is empty');
	if (isBinaryStlSize(bytes)) return parseBinaryStl(bytes, opts);
	if (looksLikeAsciiStl(bytes)) return parseAsciiStl(bytes, opts);
	if (bytes.length < STL_HEADER_BYTES) {
		throw new MeshReadError(
			`the STL file holds only ${fmt(bytes.length)} bytes: too short for a binary STL header (84 bytes) and it does not start with 'solid'`
		);
	}
	const n = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength).getUint32(80, true);
	const held = Math.floor((bytes.length - STL_HEADER_BYTES) / STL_TRIANGLE_BYTES);
	const need = STL_HEADER_BYTES + STL_TRIANGLE_BYTES * n;
	throw new MeshReadError(
		`binary STL declares ${fmt(n)} triangles (${fmt(need)} bytes) but the file holds ${fmt(bytes.length)} bytes ` +
			`(room for ${fmt(held)} triangles${(bytes.length - STL_HEADER_BYTES) % STL_TRIANGLE_BYTES ? ' and a partial one' : ''}); ` +
			`the file is truncated or not an STL`
	);
}

export function parseBinaryStl(bytes: Uint8Array, opts: ReadOptions = {}): ParsedMesh {
	const maxFaces = opts.maxFaces ?? DEFAULT_MAX_FACES;
	const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
	const triCount = dv.getUint32(80, true);
	if (STL_HEADER_BYTES + STL_TRIANGLE_BYTES * triCount !== bytes.length) {
		throw new MeshReadError(`binary STL declares ${fmt(triCount)} triangles but the file holds ${fmt(bytes.length)} bytes`);
	}
	if (triCount === 0) throw new MeshReadError('binary STL declares 0 triangles: there is no surface to inspect');
	checkFaceLimit(triCount, maxFaces, 'binary STL');
	const { result: w, firstNonFinite } = weldBinaryStlCorners(bytes, triCount);
	if (firstNonFinite >= 0) reportNonFiniteBinary(dv, firstNonFinite);
	return {
		format: 'stl-binary',
		positions: w.positions,
		indices: w.indices,
		regions: [{ name: 'default', firstFace: 0, faceCount: triCount }],
		stats: { weldedVertices: w.weldedVertices, duplicatePositions: 0, polygonsSplit: 0, facesDeclared: triCount, skippedStatements: 0 }
	};
}

function reportNonFiniteBinary(dv: DataView, corner: number): never {
	const t = Math.floor(corner / 3), k = corner % 3;
	const o = STL_HEADER_BYTES + STL_TRIANGLE_BYTES * t + 12 + 12 * k;
	const xyz = [dv.getFloat32(o, true), dv.getFloat32(o + 4, true), dv.getFloat32(o + 8, true)];
	const bad = xyz.find((v) => !Number.isFinite(v));
	throw new MeshReadError(`binary STL triangle ${fmt(t)} (0-based), corner ${k}, has a non-finite coordinate (${bad})`);
}

const Kw = { Other: 0, Solid: 1, Facet: 2, Outer: 3, Vertex: 4, Endloop: 5, Endfacet: 6, Endsolid: 7 } as const;
type Kw = (typeof Kw)[keyof typeof Kw];

/** Reads ASCII STL, each `solid name … endsolid` becoming one region. */
export function parseAsciiStl(bytes: Uint8Array, opts: ReadOptions = {}): ParsedMesh {
	const maxFaces = opts.maxFaces ?? DEFAULT_MAX_FACES;
	const end = bytes.length;
	const numErr = { err: 0 };
	// The smallest plausible facet is about 60 bytes; start from a tenth of that bound and grow.
	let corners = new Float64Array(9 * Math.min(maxFaces, Math.ceil(end / 600) + 4));
	let cornerCount = 0;
	let triCount = 0;
	let polygonsSplit = 0;
	let facets = 0;
	const regions: MeshRegion[] = [];
	let p = 0;
	let line = 1;
	let lineStart = 0;

	// Moves p to the next token start, counting lines; returns false at end of file.
	const next = (): boolean => {
		while (p < end) {
			const c = bytes[p];
			if (c === 10) { line++; lineStart = p + 1; p++; }
			else if (c === 32 || c === 9 || c === 13 || c === 11 || c === 12) p++;
			else break;
		}
		if (p - lineStart > MAX_LINE_BYTES) throw new MeshReadError(`ASCII STL line ${fmt(line)} is longer than ${fmt(MAX_LINE_BYTES)} bytes`);
		return p < end;
	};
	const keyword = (): Kw => {
		const e = tokenEnd(bytes, p, end);
		const len = e - p;
		if (e - lineStart > MAX_LINE_BYTES) throw new MeshReadError(`ASCII STL line ${fmt(line)} is longer than ${fmt(MAX_LINE_BYTES)} bytes`);
		let k: Kw = Kw.Other;
		const c0 = bytes[p] | 32;
		if (len === 6 && c0 === 118 && eqWord(bytes, p, 'vertex')) k = Kw.Vertex;
		else if (len === 5 && c0 === 102 && eqWord(bytes, p, 'facet')) k = Kw.Facet;
		else if (len === 5 && c0 === 111 && eqWord(bytes, p, 'outer')) k = Kw.Outer;
		else if (len === 7 && c0 === 101 && eqWord(bytes, p, 'endloop')) k = Kw.Endloop;
		else if (len === 8 && c0 === 101 && eqWord(bytes, p, 'endfacet')) k = Kw.Endfacet;
		else if (len === 8 && c0 === 101 && eqWord(bytes, p, 'endsolid')) k = Kw.Endsolid;
		else if (len === 5 && c0 === 115 && eqWord(bytes, p, 'solid')) k = Kw.Solid;
		p = e;
		return k;
	};
	const expect = (want: Kw, word: string): void => {
		if (!next()) throw new MeshReadError(`ASCII STL ends at line ${fmt(line)} where '${word}' was expected`);
		const at = p;
		if (keyword() !== want) {
			throw new MeshReadError(`ASCII STL line ${fmt(line)}: expected '${word}', found ${quoteToken(bytes, at, tokenEnd(bytes, at, end))}`);
		}
	};
	const restOfLine = (): string => {
		let e = p;
		while (e < end && bytes[e] !== 10) e++;
		if (e - lineStart > MAX_LINE_BYTES) throw new MeshReadError(`ASCII STL line ${fmt(line)} is longer than ${fmt(MAX_LINE_BYTES)} bytes`);
		const s = decodeRange(bytes, p, e).trim();
		p = e;
		return s;
	};

	while (next()) {
		const at = p;
		const kw = keyword();
		if (kw !== Kw.Solid) {
			throw new MeshReadError(`ASCII STL line ${fmt(line)}: expected 'solid', found ${quoteToken(bytes, at, tokenEnd(bytes, at, end))}`);
		}
		const name = restOfLine() || 'default';
		const firstFace = triCount;
		const solidLine = line;
		for (;;) {
			if (!next()) throw new MeshReadError(`ASCII STL ends inside solid '${name}' (opened at line ${fmt(solidLine)}): 'endsolid' is missing`);
			const kat = p;
			const k = keyword();
			if (k === Kw.Endsolid) { restOfLine(); break; }
			if (k !== Kw.Facet) {
				throw new MeshReadError(`ASCII STL line ${fmt(line)}: expected 'facet' or 'endsolid', found ${quoteToken(bytes, kat, tokenEnd(bytes, kat, end))}`);
			}
			facets++;
			// 'normal nx ny nz': not used, and often 'nan' for degenerate facets, so not parsed.
			restOfLine();
			expect(Kw.Outer, 'outer');
			restOfLine();
			const facetLine = line;
			let n = 0;
			const base = cornerCount;
			for (;;) {
				if (!next()) throw new MeshReadError(`ASCII STL ends inside the facet at line ${fmt(facetLine)}: 'endloop' is missing`);
				const vat = p;
				const vk = keyword();
				if (vk === Kw.Endloop) break;
				if (vk !== Kw.Vertex) {
					throw new MeshReadError(
						`ASCII STL line ${fmt(line)}: expected 'vertex' or 'endloop', found ${quoteToken(bytes, vat, tokenEnd(bytes, vat, end))}`
					);
				}
				if (n >= 3) {
					// Polygon facet (rare): fan from corner 0, so copy corners 0 and n-1 first.
					corners = growF64(corners, 3 * (cornerCount + 3));
					const c0 = 3 * base, cl = 3 * (cornerCount - 1), d = 3 * cornerCount;
					corners[d] = corners[c0]; corners[d + 1] = corners[c0 + 1]; corners[d + 2] = corners[c0 + 2];
					corners[d + 3] = corners[cl]; corners[d + 4] = corners[cl + 1]; corners[d + 5] = corners[cl + 2];
					cornerCount += 2;
				}
				corners = growF64(corners, 3 * (cornerCount + 1));
				const vline = line;
				for (let j = 0; j < 3; j++) {
					if (!next() || bytes[p] === 10) throw new MeshReadError(`ASCII STL line ${fmt(vline)}: vertex needs three coordinates`);
					if (line !== vline) throw new MeshReadError(`ASCII STL line ${fmt(vline)}: vertex needs three coordinates`);
					const e = tokenEnd(bytes, p, end);
					numErr.err = 0;
					const v = parseNumber(bytes, p, e, numErr);
					if (numErr.err === NOT_FINITE) {
						throw new MeshReadError(`ASCII STL line ${fmt(line)}: vertex has a non-finite coordinate ${quoteToken(bytes, p, e)}`);
					}
					if (numErr.err === NOT_A_NUMBER) {
						throw new MeshReadError(`ASCII STL line ${fmt(line)}: expected a coordinate, found ${quoteToken(bytes, p, e)}`);
					}
					corners[3 * cornerCount + j] = v;
					p = e;
				}
				cornerCount++;
				n++;
				if (n >= 3) {
					triCount++;
					if (triCount > maxFaces) checkFaceLimit(triCount, maxFaces, 'ASCII STL');
				}
			}
			if (n < 3) {
				throw new MeshReadError(`ASCII STL facet at line ${fmt(facetLine)} has ${n} vertices; a facet needs at least 3`);
			}
			if (n > 3) polygonsSplit++;
			expect(Kw.Endfacet, 'endfacet');
		}
		regions.push({ name, firstFace, faceCount: triCount - firstFace });
	}
	if (regions.length === 0) throw new MeshReadError('ASCII STL holds no solid');
	if (triCount === 0) throw new MeshReadError('ASCII STL holds no facets: there is no surface to inspect');
	const w = weldFloat64(corners, cornerCount);
	return {
		format: 'stl-ascii',
		positions: w.positions,
		indices: w.indices,
		regions,
		stats: { weldedVertices: w.weldedVertices, duplicatePositions: 0, polygonsSplit, facesDeclared: facets, skippedStatements: 0 }
	};
}

function eqWord(bytes: Uint8Array, p: number, word: string): boolean {
	for (let i = 0; i < word.length; i++) if ((bytes[p + i] | 32) !== word.charCodeAt(i)) return false;
	return true;
}
