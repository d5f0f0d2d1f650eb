/**
 * PLY reader: ascii, binary_little_endian, binary_big_endian; own parser over DataView.
 *
 * Why not @loaders.gl/ply:
 * - speed: on large binary files it is many times slower (scripts/bench-readers.ts prints both): it
 *   decodes the whole binary file as text to find the header and builds plain JS arrays per element.
 * - face indices: triangles and quads come through intact (quads split as 0,1,3 / 1,2,3), but a
 *   face with 5+ corners or with 2 is dropped without notice, an out-of-range index (9 of 5
 *   vertices) is passed through, a file truncated after the first of 3 faces reads as 1 face, and
 *   a header without end_header gives an empty mesh: none raise an error.
 * - unknown header lines (obj_info) are logged to the console.
 * So this reader is the product's; loaders.gl stays the outside reference in parse-ply.test.ts.
 */
import { SplitPolygons, splitConcavePolygons } from './polygons';
import { DEFAULT_MAX_FACES, MeshReadError, type MeshFormat, type ParsedMesh, type ReadOptions } from './types';
import { countDuplicatePositions } from './weld';
import {
	MAX_LINE_BYTES, NOT_A_NUMBER, NOT_FINITE, checkFaceLimit, decodeRange, fmt, growU32, parseNumber,
	quoteToken, tokenEnd
} from './text-scan';

/** Scalar type codes; sizes in bytes. */
const I8 = 0, U8 = 1, I16 = 2, U16 = 3, I32 = 4, U32 = 5, F32 = 6, F64 = 7;
const SIZE = [1, 1, 2, 2, 4, 4, 4, 8];
const TYPE_NAMES: Record<string, number> = {
	char: I8, int8: I8, uchar: U8, uint8: U8, short: I16, int16: I16, ushort: U16, uint16: U16,
	int: I32, int32: I32, uint: U32, uint32: U32, float: F32, float32: F32, double: F64, float64: F64
};

interface PlyProperty {
	name: string;
	/** Scalar type, or the item type of a list. */
	type: number;
	/** List count type, or -1 for a scalar. */
	countType: number;
}

interface PlyElement {
	name: string;
	count: number;
	props: PlyProperty[];
	line: number;
}

interface PlyHeader {
	format: 'ascii' | 'binary_little_endian' | 'binary_big_endian';
	elements: PlyElement[];
	/** Byte offset of the first data byte. */
	dataStart: number;
	/** Lines used by the header (ASCII data line numbers continue from here). */
	lines: number;
}

/** Longest header accepted; real headers are well under 4 KB even with many comments. */
const MAX_HEADER_BYTES = 1 << 20;

export function parsePlyHeader(bytes: Uint8Array): PlyHeader {
	const limit = Math.min(bytes.length, MAX_HEADER_BYTES);
	let p = 0;
	let line = 0;
	let format: PlyHeader['format'] | null = null;
	const elements: PlyElement[] = [];
	for (;;) {
		if (p >= limit) {
			if (bytes.length > MAX_HEADER_BYTES) {
				throw new MeshReadError(`PLY header has no 'end_header' line within the first ${fmt(MAX_HEADER_BYTES)} bytes`);
			}
			throw new MeshReadError(`PLY file ends after ${fmt(line)} header lines without an 'end_header' line`);
		}
		let e = bytes.indexOf(10, p);
		if (e < 0 || e > limit) e = limit;
		line++;
		if (e - p > MAX_LINE_BYTES) throw new MeshReadError(`PLY header line ${fmt(line)} is longer than ${fmt(MAX_LINE_BYTES)} bytes`);
		const text = decodeRange(bytes, p, e).trim();
		p = e + 1;
		const words = text.split(/\s+/);
		const kw = words[0];
		if (line === 1) {
			if (text !== 'ply') throw new MeshReadError(`not a PLY file: the first line is '${text.slice(0, 40)}', not 'ply'`);
			continue;
		}
		if (text === '' || kw === 'comment' || kw === 'obj_info') continue;
		if (kw === 'format') {
			const f = words[1];
			if (f !== 'ascii' && f !== 'binary_little_endian' && f !== 'binary_big_endian') {
				throw new MeshReadError(
					`PLY header line ${line}: unsupported format '${f ?? ''}' (expected ascii, binary_little_endian or binary_big_endian)`
				);
			}
			if (words[2] !== undefined && words[2] !== '1.0') {
				throw new MeshReadError(`PLY header line ${line}: unsupported PLY version '${words[2]}' (expected 1.0)`);
			}
			format = f;
		} else if (kw === 'element') {
			if (words.length !== 3 || !/^\d+$/.test(words[2])) {
				throw new MeshReadError(`PLY header line ${line}: expected 'element <name> <count>', found '${text.slice(0, 60)}'`);
			}
			const count = Number(words[2]);
			if (count > 0xffffffff) {
				throw new MeshReadError(`PLY header line ${line}: element '${words[1]}' declares ${fmt(count)} entries, more than PLY can index`);
			}
			elements.push({ name: words[1], count, props: [], line });
		} else if (kw === 'property') {
			const el = elements[elements.length - 1];
			if (!el) throw new MeshReadError(`PLY header line ${line}: 'property' before any 'element'`);
			if (words[1] === 'list') {
				const ct = TYPE_NAMES[words[2]], it = TYPE_NAMES[words[3]];
				if (words.length !== 5 || ct === undefined || it === undefined) {
					throw new MeshReadError(`PLY header line ${line}: expected 'property list <count type> <item type> <name>', found '${text.slice(0, 60)}'`);
				}
				if (ct === F32 || ct === F64) {
					throw new MeshReadError(`PLY header line ${line}: list count type '${words[2]}' is not an integer type`);
				}
				el.props.push({ name: words[4], type: it, countType: ct });
			} else {
				const t = TYPE_NAMES[words[1]];
				if (words.length !== 3 || t === undefined) {
					throw new MeshReadError(`PLY header line ${line}: expected 'property <type> <name>', found '${text.slice(0, 60)}'`);
				}
				el.props.push({ name: words[2], type: t, countType: -1 });
			}
		} else if (kw === 'end_header') {
			if (!format) throw new MeshReadError(`PLY header has no 'format' line`);
			return { format, elements, dataStart: p, lines: line };
		} else {
			throw new MeshReadError(`PLY header line ${line}: unknown keyword '${kw.slice(0, 40)}'`);
		}
	}
}

const FORMATS: Record<PlyHeader['format'], MeshFormat> = {
	ascii: 'ply-ascii', binary_little_endian: 'ply-binary-le', binary_big_endian: 'ply-binary-be'
};

export function parsePly(bytes: Uint8Array, opts: ReadOptions = {}): ParsedMesh {
	const maxFaces = opts.maxFaces ?? DEFAULT_MAX_FACES;
	if (bytes.length === 0) throw new MeshReadError('the PLY file is empty');
	const h = parsePlyHeader(bytes);
	const vEl = h.elements.find((e) => e.name === 'vertex');
	const fEl = h.elements.find((e) => e.name === 'face');
	if (!vEl) throw new MeshReadError(`PLY header declares no 'vertex' element`);
	const xyz = ['x', 'y', 'z'].map((n) => vEl.props.findIndex((q) => q.name === n));
	for (let k = 0; k < 3; k++) {
		if (xyz[k] < 0) throw new MeshReadError(`PLY vertex element has no '${'xyz'[k]}' property`);
		if (vEl.props[xyz[k]].countType >= 0) throw new MeshReadError(`PLY vertex property '${'xyz'[k]}' is a list, expected a number`);
	}
	if (!fEl || fEl.count === 0) throw new MeshReadError(`PLY file declares no faces (a point cloud?): there is no surface to inspect`);
	const listIdx = fEl.props.findIndex((q) => q.countType >= 0 && (q.name === 'vertex_indices' || q.name === 'vertex_index'));
	if (listIdx < 0) throw new MeshReadError(`PLY face element has no 'vertex_indices' list property`);
	const listProp = fEl.props[listIdx];
	if (listProp.type === F32 || listProp.type === F64) {
		throw new MeshReadError(`PLY face list '${listProp.name}' has item type ${listProp.type === F32 ? 'float' : 'double'}; vertex indices must be an integer type`);
	}
	checkFaceLimit(fEl.count, maxFaces, `PLY (declares ${fmt(fEl.count)} faces)`);

	// Refuse counts the data cannot hold before allocating anything sized by them (a loose lower
	// bound: 2 bytes per ASCII value, list counts only; the readers report exact truncation).
	const remaining = bytes.length - h.dataStart;
	let minBytes = 0;
	for (const el of h.elements) {
		let row = 0;
		for (const q of el.props) row += h.format === 'ascii' ? 2 : q.countType >= 0 ? SIZE[q.countType] : SIZE[q.type];
		const need = row * el.count;
		minBytes += need;
		if (minBytes > remaining) {
			throw new MeshReadError(
				`PLY header declares ${fmt(el.count)} '${el.name}' entries (at least ${fmt(need)} bytes) but only ${fmt(remaining)} bytes follow the header`
			);
		}
	}

	const vertCount = vEl.count;
	const positions = new Float64Array(3 * vertCount);
	const st = { indices: new Uint32Array(3 * fEl.count), triCount: 0, polygonsSplit: 0, polygons: new SplitPolygons() };
	const ctx: ReadCtx = { bytes, h, vEl, fEl, xyz, listIdx, positions, st, maxFaces, vertCount };
	if (h.format === 'ascii') readAscii(ctx);
	else readBinary(ctx, h.format === 'binary_little_endian');

	const indices = st.indices.length === 3 * st.triCount ? st.indices : st.indices.slice(0, 3 * st.triCount);
	splitConcavePolygons(positions, indices, st.polygons);
	return {
		format: FORMATS[h.format],
		positions,
		indices,
		regions: [{ name: 'default', firstFace: 0, faceCount: st.triCount }],
		stats: {
			weldedVertices: 0,
			duplicatePositions: countDuplicatePositions(positions, vertCount),
			polygonsSplit: st.polygonsSplit,
			facesDeclared: fEl.count,
			skippedStatements: 0
		}
	};
}

interface ReadCtx {
	bytes: Uint8Array;
	h: PlyHeader;
	vEl: PlyElement;
	fEl: PlyElement;
	xyz: number[];
	listIdx: number;
	positions: Float64Array;
	st: { indices: Uint32Array<ArrayBuffer>; triCount: number; polygonsSplit: number; polygons: SplitPolygons };
	maxFaces: number;
	vertCount: number;
}

function readScalar(dv: DataView, o: number, type: number, le: boolean): number {
	switch (type) {
		case I8: return dv.getInt8(o);
		case U8: return dv.getUint8(o);
		case I16: return dv.getInt16(o, le);
		case U16: return dv.getUint16(o, le);
		case I32: return dv.getInt32(o, le);
		case U32: return dv.getUint32(o, le);
		case F32: return dv.getFloat32(o, le);
		default: return dv.getFloat64(o, le);
	}
}

function nonFinite(where: string, v: number, k: number, value: number): never {
	throw new MeshReadError(`PLY vertex ${fmt(v)} (0-based${where}) has a non-finite ${'xyz'[k]} coordinate (${value})`);
}

function badIndex(f: number, idx: number, vertCount: number, where: string): never {
	throw new MeshReadError(
		`PLY face ${fmt(f)} (0-based${where}) refers to vertex ${fmt(idx)} but the file has ${fmt(vertCount)} vertices (0–${fmt(vertCount - 1)})`
	);
}

function tooFewCorners(f: number, n: number, where: string): never {
	throw new MeshReadError(`PLY face ${fmt(f)} (0-based${where}) has ${fmt(n)} vertices; a face needs at least 3`);
}

/** Appends face corners c[0..n) as a triangle fan (concave polygons are split again after reading: polygons.ts). */
function addFan(ctx: ReadCtx, c: Uint32Array, n: number): void {
	const st = ctx.st;
	const tris = n - 2;
	if (tris > 1) {
		st.polygonsSplit++;
		st.polygons.add(st.triCount, n);
	}
	if (st.triCount + tris > ctx.maxFaces) checkFaceLimit(st.triCount + tris, ctx.maxFaces, 'PLY');
	if (3 * (st.triCount + tris) > st.indices.length) st.indices = growU32(st.indices, 3 * (st.triCount + tris));
	const ix = st.indices;
	let o = 3 * st.triCount;
	const c0 = c[0];
	for (let i = 1; i <= tris; i++, o += 3) {
		ix[o] = c0;
		ix[o + 1] = c[i];
		ix[o + 2] = c[i + 1];
	}
	st.triCount += tris;
}

function readBinary(ctx: ReadCtx, le: boolean): void {
	const { bytes, h, vEl, fEl, positions, vertCount } = ctx;
	const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
	const end = bytes.length;
	let o = h.dataStart;
	let corners = new Uint32Array(64);
	const short = (el: PlyElement, i: number): never => {
		throw new MeshReadError(`PLY data ends inside '${el.name}' entry ${fmt(i)} of ${fmt(el.count)}: the file is truncated`);
	};
	for (const el of h.elements) {
		const props = el.props;
		const np = props.length;
		const fixed = props.every((q) => q.countType < 0);
		if (el === vEl && fixed) {
			// Fixed stride: offsets of x, y, z within a row.
			let stride = 0;
			const off = [0, 0, 0];
			for (let j = 0; j < np; j++) {
				for (let k = 0; k < 3; k++) if (ctx.xyz[k] === j) off[k] = stride;
				stride += SIZE[props[j].type];
			}
			if (o + stride * el.count > end) short(el, Math.floor((end - o) / stride));
			const tx = props[ctx.xyz[0]].type, ty = props[ctx.xyz[1]].type, tz = props[ctx.xyz[2]].type;
			const ox = off[0], oy = off[1], oz = off[2];
			let bad = false;
			if (tx === F32 && ty === F32 && tz === F32) {
				for (let v = 0; v < el.count; v++, o += stride) {
					const x = dv.getFloat32(o + ox, le), y = dv.getFloat32(o + oy, le), z = dv.getFloat32(o + oz, le);
					positions[3 * v] = x; positions[3 * v + 1] = y; positions[3 * v + 2] = z;
					if (x - x !== 0 || y - y !== 0 || z - z !== 0) bad = true;
				}
			} else {
				for (let v = 0; v < el.count; v++, o += stride) {
					const x = readScalar(dv, o + ox, tx, le), y = readScalar(dv, o + oy, ty, le), z = readScalar(dv, o + oz, tz, le);
					positions[3 * v] = x; positions[3 * v + 1] = y; positions[3 * v + 2] = z;
					if (x - x !== 0 || y - y !== 0 || z - z !== 0) bad = true;
				}
			}
			if (bad) {
				for (let i = 0; i < 3 * vertCount; i++) if (!Number.isFinite(positions[i])) nonFinite('', Math.floor(i / 3), i % 3, positions[i]);
			}
			continue;
		}
		const isV = el === vEl, isF = el === fEl;
		if (np === 0) continue;
		for (let i = 0; i < el.count; i++) {
			for (let j = 0; j < np; j++) {
				const q = props[j];
				if (q.countType < 0) {
					const sz = SIZE[q.type];
					if (o + sz > end) short(el, i);
					if (isV) {
						for (let k = 0; k < 3; k++) {
							if (ctx.xyz[k] === j) {
								const val = readScalar(dv, o, q.type, le);
								if (!Number.isFinite(val)) nonFinite('', i, k, val);
								positions[3 * i + k] = val;
							}
						}
					}
					o += sz;
					continue;
				}
				const csz = SIZE[q.countType];
				if (o + csz > end) short(el, i);
				const n = readScalar(dv, o, q.countType, le);
				o += csz;
				if (n < 0) throw new MeshReadError(`PLY '${el.name}' entry ${fmt(i)} has a negative list length ${n}`);
				const isz = SIZE[q.type];
				if (o + n * isz > end) short(el, i);
				if (isF && j === ctx.listIdx) {
					if (n < 3) tooFewCorners(i, n, '');
					if (n > corners.length) corners = new Uint32Array(n);
					const t = q.type;
					for (let k = 0; k < n; k++, o += isz) {
						const idx = t === I32 ? dv.getInt32(o, le) : t === U32 ? dv.getUint32(o, le) : readScalar(dv, o, t, le);
						if (idx < 0 || idx >= vertCount) badIndex(i, idx, vertCount, '');
						corners[k] = idx;
					}
					if (n === 3) {
						const st = ctx.st;
						if (st.triCount >= ctx.maxFaces) checkFaceLimit(st.triCount + 1, ctx.maxFaces, 'PLY');
						if (3 * st.triCount + 3 > st.indices.length) st.indices = growU32(st.indices, 3 * st.triCount + 3);
						const t3 = 3 * st.triCount++;
						st.indices[t3] = corners[0];
						st.indices[t3 + 1] = corners[1];
						st.indices[t3 + 2] = corners[2];
					} else addFan(ctx, corners, n);
				} else {
					o += n * isz;
				}
			}
		}
	}
}

function readAscii(ctx: ReadCtx): void {
	const { bytes, h, vEl, fEl, positions, vertCount } = ctx;
	const end = bytes.length;
	const numErr = { err: 0 };
	let p = h.dataStart;
	let line = h.lines + 1;
	let lineStart = p;
	let corners = new Uint32Array(64);
	const token = (el: PlyElement, i: number): number => {
		while (p < end) {
			const c = bytes[p];
			if (c === 10) { line++; lineStart = ++p; }
			else if (c === 32 || c === 9 || c === 13 || c === 11 || c === 12) p++;
			else break;
		}
		if (p - lineStart > MAX_LINE_BYTES) throw new MeshReadError(`PLY line ${fmt(line)} is longer than ${fmt(MAX_LINE_BYTES)} bytes`);
		if (p >= end) {
			throw new MeshReadError(`PLY data ends at line ${fmt(line)} inside '${el.name}' entry ${fmt(i)} of ${fmt(el.count)}: the file is truncated`);
		}
		return tokenEnd(bytes, p, end);
	};
	const number = (e: number, what: string): number => {
		numErr.err = 0;
		const v = parseNumber(bytes, p, e, numErr);
		if (numErr.err === NOT_A_NUMBER) throw new MeshReadError(`PLY line ${fmt(line)}: expected ${what}, found ${quoteToken(bytes, p, e)}`);
		if (numErr.err === NOT_FINITE) throw new MeshReadError(`PLY line ${fmt(line)}: ${what} is not finite: ${quoteToken(bytes, p, e)}`);
		return v;
	};
	const integer = (e: number, what: string): number => {
		const v = number(e, what);
		if (!Number.isInteger(v)) throw new MeshReadError(`PLY line ${fmt(line)}: expected ${what} (an integer), found ${quoteToken(bytes, p, e)}`);
		return v;
	};
	for (const el of h.elements) {
		const props = el.props;
		const np = props.length;
		const isV = el === vEl, isF = el === fEl;
		if (np === 0) continue;
		for (let i = 0; i < el.count; i++) {
			for (let j = 0; j < np; j++) {
				const q = props[j];
				let e = token(el, i);
				if (q.countType < 0) {
					if (isV) {
						const k = j === ctx.xyz[0] ? 0 : j === ctx.xyz[1] ? 1 : j === ctx.xyz[2] ? 2 : -1;
						if (k >= 0) {
							numErr.err = 0;
							const v = parseNumber(bytes, p, e, numErr);
							if (numErr.err === NOT_FINITE) {
								throw new MeshReadError(`PLY line ${fmt(line)}: vertex ${fmt(i)} (0-based) has a non-finite ${'xyz'[k]} coordinate ${quoteToken(bytes, p, e)}`);
							}
							if (numErr.err) throw new MeshReadError(`PLY line ${fmt(line)}: expected a coordinate, found ${quoteToken(bytes, p, e)}`);
							positions[3 * i + k] = v;
						}
					}
					p = e;
					continue;
				}
				const n = integer(e, 'a list length');
				if (n < 0) throw new MeshReadError(`PLY line ${fmt(line)}: negative list length ${n}`);
				p = e;
				const take = isF && j === ctx.listIdx;
				if (take) {
					if (n < 3) tooFewCorners(i, n, `, line ${fmt(line)}`);
					if (n > corners.length) {
						if (n > MAX_LINE_BYTES) throw new MeshReadError(`PLY line ${fmt(line)}: face with ${fmt(n)} vertices`);
						corners = new Uint32Array(n);
					}
				}
				for (let k = 0; k < n; k++) {
					e = token(el, i);
					if (take) {
						const idx = integer(e, 'a vertex index');
						if (idx < 0 || idx >= vertCount) badIndex(i, idx, vertCount, `, line ${fmt(line)}`);
						corners[k] = idx;
					}
					p = e;
				}
				if (take) addFan(ctx, corners, n);
			}
		}
	}
}
