/**
 * Byte-level scanning shared by the text readers (ASCII STL, ASCII PLY, OBJ). Works on the raw
 * UTF-8 bytes: every syntax character is ASCII and UTF-8 multi-byte sequences never contain ASCII
 * bytes, so only names are decoded (TextDecoder). No per-line strings are built.
 */
import { MeshReadError } from './types';

/** Longest line a text mesh may have; longer ones are refused as not a mesh text file. */
export const MAX_LINE_BYTES = 1 << 16;

export const fmt = (n: number): string => n.toLocaleString('en-US');

const utf8 = new TextDecoder('utf-8');

/** Decodes bytes[start, end) as UTF-8 (names, tokens for messages). */
export function decodeRange(bytes: Uint8Array, start: number, end: number): string {
	return utf8.decode(bytes.subarray(start, end));
}

/** Token for an error message, shortened. */
export function quoteToken(bytes: Uint8Array, start: number, end: number): string {
	const cut = Math.min(end, start + 40);
	return `'${decodeRange(bytes, start, cut)}${cut < end ? '…' : ''}'`;
}

export const isSpace = (c: number): boolean => c === 32 || c === 9 || c === 13 || c === 11 || c === 12;

/** End of token starting at `p` (first whitespace or end). */
export function tokenEnd(bytes: Uint8Array, p: number, end: number): number {
	while (p < end) {
		const c = bytes[p];
		if (c === 32 || c === 9 || c === 10 || c === 13 || c === 11 || c === 12) break;
		p++;
	}
	return p;
}

const POW10 = [1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22];
const NON_FINITE = /^[+-]?(nan|inf|infinity|1\.#inf|1\.#ind|1\.#qnan)/i;

/** Sentinel results of {@link parseNumber}: the token is not a number / is NaN or infinite. */
export const NOT_A_NUMBER = 1;
export const NOT_FINITE = 2;

/**
 * Parses the decimal number bytes[start, end). Returns the value, or sets `out.err` to
 * NOT_A_NUMBER / NOT_FINITE. Fast path (Clinger): an integer mantissa below 2^53 scaled by an
 * exact power of ten up to 1e22 is correctly rounded by one multiplication or division; anything
 * else falls back to Number() on the token, so results always equal parseFloat's.
 */
export function parseNumber(bytes: Uint8Array, start: number, end: number, out: { err: number }): number {
	let p = start;
	let neg = false;
	let c = bytes[p];
	if (c === 45) { neg = true; p++; } else if (c === 43) p++;
	let m = 0;
	let digits = 0;
	let exp = 0;
	while (p < end) {
		c = bytes[p] - 48;
		if (c < 0 || c > 9) break;
		m = m * 10 + c;
		digits++;
		p++;
	}
	if (p < end && bytes[p] === 46) {
		p++;
		while (p < end) {
			c = bytes[p] - 48;
			if (c < 0 || c > 9) break;
			m = m * 10 + c;
			digits++;
			exp--;
			p++;
		}
	}
	if (digits === 0) return slowNumber(bytes, start, end, out);
	if (p < end && (bytes[p] === 101 || bytes[p] === 69)) {
		p++;
		let eneg = false;
		if (p < end && (bytes[p] === 45 || bytes[p] === 43)) { eneg = bytes[p] === 45; p++; }
		let e = 0, ed = 0;
		while (p < end) {
			c = bytes[p] - 48;
			if (c < 0 || c > 9) break;
			if (e < 100000) e = e * 10 + c;
			ed++;
			p++;
		}
		if (ed === 0) return slowNumber(bytes, start, end, out);
		exp += eneg ? -e : e;
	}
	if (p !== end) return slowNumber(bytes, start, end, out);
	if (m > 9007199254740991 || exp > 22 || exp < -22) {
		// Plain decimal outside the fast path (e.g. 17 significant digits): exact via parseFloat.
		let s = '';
		for (let i = start; i < end; i++) s += String.fromCharCode(bytes[i]);
		const v = parseFloat(s);
		if (v - v !== 0) out.err = NOT_FINITE;
		return v;
	}
	const v = exp >= 0 ? m * POW10[exp] : m / POW10[-exp];
	return neg ? -v : v;
}

function slowNumber(bytes: Uint8Array, start: number, end: number, out: { err: number }): number {
	if (end - start > 400) { out.err = NOT_A_NUMBER; return 0; }
	let s = '';
	for (let i = start; i < end; i++) s += String.fromCharCode(bytes[i]);
	if (NON_FINITE.test(s)) { out.err = NOT_FINITE; return 0; }
	const v = Number(s);
	if (s.trim() === '' || Number.isNaN(v) || /^[+-]?0[xbo]/i.test(s)) { out.err = NOT_A_NUMBER; return 0; }
	if (!Number.isFinite(v)) { out.err = NOT_FINITE; return 0; }
	return v;
}

/** Grows a typed array to at least `need` elements (doubling), keeping its contents. */
export function growF64(a: Float64Array<ArrayBuffer>, need: number): Float64Array<ArrayBuffer> {
	if (need <= a.length) return a;
	let n = Math.max(16, a.length * 2);
	while (n < need) n *= 2;
	const b = new Float64Array(n);
	b.set(a);
	return b;
}

export function growU32(a: Uint32Array<ArrayBuffer>, need: number): Uint32Array<ArrayBuffer> {
	if (need <= a.length) return a;
	let n = Math.max(16, a.length * 2);
	while (n < need) n *= 2;
	const b = new Uint32Array(n);
	b.set(a);
	return b;
}

/** Refuses a file whose triangle count passes the limit. */
export function checkFaceLimit(triCount: number, maxFaces: number, what: string): void {
	if (triCount > maxFaces) {
		throw new MeshReadError(`${what} holds more than ${fmt(maxFaces)} triangles, the limit for one mesh`);
	}
}
