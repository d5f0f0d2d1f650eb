/**
 * Exact-equality vertex welding over the bit patterns of coordinates (open addressing on typed
 * arrays, linear probing, table kept at most half full). −0 is folded onto +0 by the callers'
 * canonicalisation below, so the two zeros weld; NaN never reaches here (readers refuse it).
 * Expected O(n) for n corners.
 */

/** Result of welding a corner soup: distinct vertices and, per input corner, its vertex id. */
export interface WeldResult {
	/** Distinct vertices in order of first appearance, xyz per vertex. */
	positions: Float64Array;
	/** Vertex id of each input corner (same length as the corner count). */
	indices: Uint32Array;
	/** Distinct vertex count (positions.length / 3). */
	vertCount: number;
	/**
	 * Vertex records merged away: input corners (or vertices) minus distinct positions. A closed
	 * binary STL cube has 36 corners and 8 distinct positions, so 28.
	 */
	weldedVertices: number;
}

/**
 * Mixes three 32-bit words (multiply-xorshift rounds). A plain xor of products leaves the low bits
 * depending on the low mantissa bits only: on a 1M-triangle torus that gave 3.3 extra probes per
 * corner at half load, this gives 0.5.
 */
function hash3(x: number, y: number, z: number): number {
	let h = Math.imul(x ^ (x >>> 16), 0x9e3779b1);
	h = Math.imul(h ^ (h >>> 15) ^ y, 0x85ebca77);
	h = Math.imul(h ^ (h >>> 13) ^ z, 0xc2b2ae3d);
	return h ^ (h >>> 16);
}

/** Front cache of 16,384 slots × 16 bytes = 256 KB. */
const RECENT_MASK = (1 << 14) - 1;

function tableSizeFor(n: number): number {
	let size = 1024;
	while (size < 2 * n) size *= 2;
	return size;
}

/**
 * Welds corners given as float32 bit patterns, three words per corner (x, y, z); −0 welds with +0.
 * `bits` is not modified.
 */
export function weldFloat32Bits(bits: Uint32Array, cornerCount: number): WeldResult {
	const u16 = new Uint16Array(bits.buffer, bits.byteOffset, 2 * bits.length);
	return weldHalfwords(u16, cornerCount, 0, 18).result;
}

/**
 * Welds the corners of a binary STL straight from the file bytes (no copy of the coordinates):
 * triangle t, corner k starts at byte 84 + 50t + 12 + 12k, which is 2-byte aligned, so words are
 * read as two little-endian halves. `firstNonFinite` is the first corner with a NaN/∞ coordinate
 * (the weld stops there), or -1.
 */
export function weldBinaryStlCorners(bytes: Uint8Array, triCount: number): { result: WeldResult; firstNonFinite: number } {
	let src = bytes;
	if (bytes.byteOffset % 2 !== 0) src = bytes.slice();
	const hostLe = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;
	if (!hostLe) {
		// Big-endian host (rare): swap into a little-endian-ordered copy of the halfwords.
		src = bytes.slice();
		for (let i = 0; i + 1 < src.length; i += 2) { const t = src[i]; src[i] = src[i + 1]; src[i + 1] = t; }
	}
	const u16 = new Uint16Array(src.buffer, src.byteOffset, src.length >>> 1);
	return weldHalfwords(u16, 3 * triCount, 48, 25);
}

/**
 * Core weld. Corner c = 3g + k has its x word at halfwords base + groupStride·g + 6k (low half
 * first). The table holds id + 1 per slot (0 = empty); a vertex's three words are appended in id
 * order to `words`, which probes compare against and which becomes the positions in one in-order
 * pass. A 4-byte slot keeps the table a quarter of a slot holding the words too (1 M triangles:
 * 4 MB and 6 MB of words instead of 16 MB), so fewer of its pages are touched and faulted in, and
 * the weld took 0.76× the time warm. A small direct-mapped front cache catches corners that recur
 * within a few thousand triangles. Fresh memory is costly (page faults), so nothing corner-sized
 * is allocated beyond the output indices.
 */
function weldHalfwords(
	u16: Uint16Array, cornerCount: number, base: number, groupStride: number
): { result: WeldResult; firstNonFinite: number } {
	const indices = new Uint32Array(cornerCount);
	// Meshes have about half as many vertices as triangles (a sixth of the corners); start there.
	const size = tableSizeFor(Math.max(16, Math.ceil(cornerCount / 6)));
	// Words for as many vertices as the table takes before it grows (half its slots), so the two grow together.
	const wt: WeldTable = { table: new Uint32Array(size), words: new Uint32Array(3 * Math.min(cornerCount, size / 2)), vertCount: 0, cornerCount };
	const recent = new Uint32Array(4 * (RECENT_MASK + 1));
	// The corner loop and the positions loop are functions of their own: in a fresh process code
	// after an optimised loop that has not run yet makes V8 drop the loop's code at its exit.
	const firstNonFinite = weldCorners(u16, cornerCount, base, groupStride, wt, recent, indices);
	const vertCount = wt.vertCount;
	const positions = new Float64Array(3 * vertCount);
	wordPositions(wt.words, vertCount, positions);
	return { result: { positions, indices, vertCount, weldedVertices: cornerCount - vertCount }, firstNonFinite };
}

/** The weld's table of id + 1 per slot (replaced by one twice the size when half full) and its vertices' words, xyz per id. */
interface WeldTable {
	table: Uint32Array;
	words: Uint32Array;
	vertCount: number;
	/** Corners in all: the most vertices there can be, so the words never grow past it. */
	cornerCount: number;
}

/** Welds the corners into wt and indices; returns the first corner with a NaN/∞ coordinate, or −1. */
function weldCorners(u16: Uint16Array, cornerCount: number, base: number, groupStride: number, wt: WeldTable, recent: Uint32Array, indices: Uint32Array): number {
	let table = wt.table;
	let words = wt.words;
	let mask = table.length - 1;
	let vertCount = 0;
	let hw = base, k = 0;
	for (let c = 0; c < cornerCount; c++) {
		let x = (u16[hw] | (u16[hw + 1] << 16)) >>> 0;
		let y = (u16[hw + 2] | (u16[hw + 3] << 16)) >>> 0;
		let z = (u16[hw + 4] | (u16[hw + 5] << 16)) >>> 0;
		if (++k === 3) { k = 0; hw += groupStride - 12; } else hw += 6;
		if (x === 0x80000000) x = 0;
		if (y === 0x80000000) y = 0;
		if (z === 0x80000000) z = 0;
		if ((x & 0x7f800000) === 0x7f800000 || (y & 0x7f800000) === 0x7f800000 || (z & 0x7f800000) === 0x7f800000) return c;
		const h = hash3(x, y, z);
		const r4 = (h & RECENT_MASK) << 2;
		if (recent[r4 + 3] !== 0 && recent[r4] === x && recent[r4 + 1] === y && recent[r4 + 2] === z) {
			indices[c] = recent[r4 + 3] - 1;
			continue;
		}
		let s = h & mask;
		let id1 = table[s];
		while (id1 !== 0) {
			const w3 = 3 * (id1 - 1);
			if (words[w3] === x && words[w3 + 1] === y && words[w3 + 2] === z) break;
			s = (s + 1) & mask;
			id1 = table[s];
		}
		if (id1 === 0) {
			id1 = ++vertCount;
			wt.vertCount = vertCount;
			table[s] = id1;
			const w3 = 3 * (id1 - 1);
			if (w3 + 3 > words.length) {
				words = grownWords(words, wt.cornerCount);
				wt.words = words;
			}
			words[w3] = x;
			words[w3 + 1] = y;
			words[w3 + 2] = z;
			if (2 * vertCount > table.length) {
				table = rehashIds(words, vertCount, 2 * table.length);
				mask = table.length - 1;
				wt.table = table;
			}
		}
		indices[c] = id1 - 1;
		recent[r4] = x;
		recent[r4 + 1] = y;
		recent[r4 + 2] = z;
		recent[r4 + 3] = id1;
	}
	return -1;
}

/** The words array at twice its length (at most three words per corner), its contents kept. */
function grownWords(words: Uint32Array, cornerCount: number): Uint32Array {
	const grown = new Uint32Array(Math.min(3 * cornerCount, 2 * words.length));
	grown.set(words);
	return grown;
}

/** The float32 words of the vertices in id order as float64 positions. */
function wordPositions(words: Uint32Array, vertCount: number, positions: Float64Array): void {
	const asFloat = new Float32Array(words.buffer, words.byteOffset, 3 * vertCount);
	for (let i = 0; i < 3 * vertCount; i++) positions[i] = asFloat[i];
}

/** A table of `size` slots holding ids 1 … vertCount, placed by the hash of their words. */
function rehashIds(words: Uint32Array, vertCount: number, size: number): Uint32Array {
	const mask = size - 1;
	const table = new Uint32Array(size);
	for (let v = 0; v < vertCount; v++) {
		let s = hash3(words[3 * v], words[3 * v + 1], words[3 * v + 2]) & mask;
		while (table[s] !== 0) s = (s + 1) & mask;
		table[s] = v + 1;
	}
	return table;
}

/**
 * Welds float64 corners (xyz per corner) by exact equality, −0 equal to +0. Used for ASCII STL
 * (coordinates kept at the text's precision) and for counting duplicate positions in indexed formats.
 */
export function weldFloat64(corners: Float64Array, cornerCount: number): WeldResult {
	// Canonical copy: adding +0 turns −0 into +0 and leaves every other value unchanged.
	const canon = new Float64Array(3 * cornerCount);
	for (let i = 0; i < 3 * cornerCount; i++) canon[i] = corners[i] + 0;
	const w = new Uint32Array(canon.buffer);
	const indices = new Uint32Array(cornerCount);
	let size = tableSizeFor(Math.max(16, cornerCount >>> 2));
	let mask = size - 1;
	let table = new Int32Array(size).fill(-1);
	// First corner index of each distinct vertex; the canonical copy holds its words.
	let firstCorner = new Uint32Array(Math.max(16, cornerCount >>> 2));
	let vertCount = 0;
	for (let c = 0; c < cornerCount; c++) {
		const c6 = 6 * c;
		const h = hash64(w, c6) & mask;
		let slot = h;
		let id = table[slot];
		while (id !== -1) {
			const u6 = 6 * firstCorner[id];
			if (
				w[u6] === w[c6] && w[u6 + 1] === w[c6 + 1] && w[u6 + 2] === w[c6 + 2] &&
				w[u6 + 3] === w[c6 + 3] && w[u6 + 4] === w[c6 + 4] && w[u6 + 5] === w[c6 + 5]
			) break;
			slot = (slot + 1) & mask;
			id = table[slot];
		}
		if (id === -1) {
			id = vertCount++;
			if (id >= firstCorner.length) {
				const grown = new Uint32Array(Math.min(cornerCount, 2 * firstCorner.length));
				grown.set(firstCorner);
				firstCorner = grown;
			}
			firstCorner[id] = c;
			table[slot] = id;
			if (2 * vertCount > size) {
				size *= 2;
				mask = size - 1;
				table = new Int32Array(size).fill(-1);
				for (let k = 0; k < vertCount; k++) {
					let s = hash64(w, 6 * firstCorner[k]) & mask;
					while (table[s] !== -1) s = (s + 1) & mask;
					table[s] = k;
				}
			}
		}
		indices[c] = id;
	}
	const positions = new Float64Array(3 * vertCount);
	for (let v = 0; v < vertCount; v++) {
		const s3 = 3 * firstCorner[v], v3 = 3 * v;
		positions[v3] = canon[s3];
		positions[v3 + 1] = canon[s3 + 1];
		positions[v3 + 2] = canon[s3 + 2];
	}
	return { positions, indices, vertCount, weldedVertices: cornerCount - vertCount };
}

function hash64(w: Uint32Array, o: number): number {
	let h = Math.imul(w[o], 0x9e3779b1) ^ Math.imul(w[o + 1], 0x85ebca77);
	h = Math.imul(h ^ (h >>> 13), 0x27d4eb2f) ^ Math.imul(w[o + 2], 0xc2b2ae3d) ^ Math.imul(w[o + 3], 0x165667b1);
	h = Math.imul(h ^ (h >>> 13), 0x27d4eb2f) ^ Math.imul(w[o + 4], 0x9e3779b1) ^ Math.imul(w[o + 5], 0x85ebca77);
	return h ^ (h >>> 15);
}

/**
 * Indexed formats: how many vertex indices share an exact position with an earlier index
 * (vertCount minus distinct positions). Such twins make a closed surface look open, the classic
 * cause of false holes.
 */
export function countDuplicatePositions(positions: Float64Array, vertCount: number): number {
	return exactTwins(positions, vertCount, null);
}

/**
 * For each vertex, the first vertex at exactly the same position (itself when it is the first), so
 * `map[indices[i]]` welds an indexed mesh exactly without moving anything. Same table as
 * countDuplicatePositions; `twins` is that count.
 */
export function exactWeldMap(positions: Float64Array, vertCount: number): { map: Uint32Array; twins: number } {
	const map = new Uint32Array(vertCount);
	const twins = exactTwins(positions, vertCount, map);
	return { map, twins };
}

function exactTwins(positions: Float64Array, vertCount: number, map: Uint32Array | null): number {
	if (vertCount === 0) return 0;
	// Table of vertex id + 1 (0 = empty); equality is tested on the float values themselves
	// (−0 === +0, NaN never present), hashing on the words with −0 folded onto +0.
	const w = new Uint32Array(positions.buffer, positions.byteOffset, 6 * vertCount);
	const size = tableSizeFor(vertCount);
	const mask = size - 1;
	const table = new Uint32Array(size);
	let distinct = 0;
	for (let v = 0; v < vertCount; v++) {
		const v3 = 3 * v, v6 = 6 * v;
		const x = positions[v3], y = positions[v3 + 1], z = positions[v3 + 2];
		// Words of +0 are all zero, so a zero coordinate hashes as (0, 0) whatever its sign.
		const hx = x === 0 ? 0 : w[v6] ^ Math.imul(w[v6 + 1], 0x27d4eb2f);
		const hy = y === 0 ? 0 : w[v6 + 2] ^ Math.imul(w[v6 + 3], 0x27d4eb2f);
		const hz = z === 0 ? 0 : w[v6 + 4] ^ Math.imul(w[v6 + 5], 0x27d4eb2f);
		let s = hash3(hx, hy, hz) & mask;
		let id1 = table[s];
		while (id1 !== 0) {
			const u3 = 3 * (id1 - 1);
			if (positions[u3] === x && positions[u3 + 1] === y && positions[u3 + 2] === z) break;
			s = (s + 1) & mask;
			id1 = table[s];
		}
		if (id1 === 0) {
			table[s] = v + 1;
			distinct++;
			if (map) map[v] = v;
		} else if (map) map[v] = id1 - 1;
	}
	return vertCount - distinct;
}
