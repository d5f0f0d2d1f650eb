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
 * Welds corners given as float32 bit patterns, three words per corner (x, y, z). Callers must have
 * mapped 0x80000000 (−0) to 0. `bits` is not modified.
 */
export function weldFloat32Bits(bits: Uint32Array, cornerCount: number): WeldResult {
	const indices = new Uint32Array(cornerCount);
	// Slot s holds [x, y, z, id + 1] in one 16-byte run (0 in the last word = empty), so a probe
	// touches one cache line. Meshes have about half as many vertices as triangles (a sixth of the
	// corners); start there and double when half full.
	let size = tableSizeFor(Math.max(16, Math.ceil(cornerCount / 6)));
	let mask = size - 1;
	let table = new Uint32Array(4 * size);
	const recent = new Uint32Array(4 * (RECENT_MASK + 1));
	let vertCount = 0;
	for (let c = 0; c < cornerCount; c++) {
		const c3 = 3 * c;
		const x = bits[c3], y = bits[c3 + 1], z = bits[c3 + 2];
		const h = hash3(x, y, z);
		// Front cache: a corner usually recurs within a few thousand triangles, so most lookups
		// end in this L2-sized direct-mapped table instead of the large one.
		const r4 = (h & RECENT_MASK) << 2;
		if (recent[r4 + 3] !== 0 && recent[r4] === x && recent[r4 + 1] === y && recent[r4 + 2] === z) {
			indices[c] = recent[r4 + 3] - 1;
			continue;
		}
		let s4 = (h & mask) << 2;
		let id1 = table[s4 + 3];
		while (id1 !== 0) {
			if (table[s4] === x && table[s4 + 1] === y && table[s4 + 2] === z) break;
			s4 = (s4 + 4) & (4 * size - 1);
			id1 = table[s4 + 3];
		}
		if (id1 === 0) {
			id1 = ++vertCount;
			table[s4] = x;
			table[s4 + 1] = y;
			table[s4 + 2] = z;
			table[s4 + 3] = id1;
			if (2 * vertCount > size) {
				size *= 2;
				mask = size - 1;
				table = rehash32(table, size);
			}
		}
		indices[c] = id1 - 1;
		recent[r4] = x;
		recent[r4 + 1] = y;
		recent[r4 + 2] = z;
		recent[r4 + 3] = id1;
	}
	const asFloat = new Float32Array(table.buffer);
	const positions = new Float64Array(3 * vertCount);
	for (let s = 0; s < size; s++) {
		const id1 = table[4 * s + 3];
		if (id1 === 0) continue;
		const v3 = 3 * (id1 - 1);
		positions[v3] = asFloat[4 * s];
		positions[v3 + 1] = asFloat[4 * s + 1];
		positions[v3 + 2] = asFloat[4 * s + 2];
	}
	return { positions, indices, vertCount, weldedVertices: cornerCount - vertCount };
}

function rehash32(old: Uint32Array, size: number): Uint32Array {
	const mask = size - 1;
	const table = new Uint32Array(4 * size);
	for (let o = 0; o < old.length; o += 4) {
		if (old[o + 3] === 0) continue;
		const x = old[o], y = old[o + 1], z = old[o + 2];
		const h = hash3(x, y, z);
		let s4 = (h & mask) << 2;
		while (table[s4 + 3] !== 0) s4 = (s4 + 4) & (4 * size - 1);
		table[s4] = x;
		table[s4 + 1] = y;
		table[s4 + 2] = z;
		table[s4 + 3] = old[o + 3];
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
	if (vertCount === 0) return 0;
	return weldFloat64(positions, vertCount).weldedVertices;
}
