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
	// Meshes usually have about half as many vertices as triangles; start there and grow.
	let size = tableSizeFor(Math.max(16, cornerCount >>> 3));
	let mask = size - 1;
	let table = new Int32Array(size).fill(-1);
	let uniq = new Uint32Array(3 * Math.max(16, cornerCount >>> 3));
	let vertCount = 0;
	for (let c = 0; c < cornerCount; c++) {
		const c3 = 3 * c;
		const x = bits[c3], y = bits[c3 + 1], z = bits[c3 + 2];
		let h = Math.imul(x, 0x9e3779b1) ^ Math.imul(y, 0x85ebca77) ^ Math.imul(z, 0xc2b2ae3d);
		h ^= h >>> 15;
		let slot = h & mask;
		let id = table[slot];
		while (id !== -1) {
			const u3 = 3 * id;
			if (uniq[u3] === x && uniq[u3 + 1] === y && uniq[u3 + 2] === z) break;
			slot = (slot + 1) & mask;
			id = table[slot];
		}
		if (id === -1) {
			id = vertCount++;
			if (3 * id + 3 > uniq.length) {
				const grown = new Uint32Array(Math.min(3 * cornerCount, 2 * uniq.length));
				grown.set(uniq);
				uniq = grown;
			}
			const u3 = 3 * id;
			uniq[u3] = x;
			uniq[u3 + 1] = y;
			uniq[u3 + 2] = z;
			table[slot] = id;
			if (2 * vertCount > size) {
				size *= 2;
				mask = size - 1;
				table = rehash32(uniq, vertCount, size);
			}
		}
		indices[c] = id;
	}
	const asFloat = new Float32Array(uniq.buffer, 0, 3 * vertCount);
	const positions = new Float64Array(3 * vertCount);
	for (let i = 0; i < 3 * vertCount; i++) positions[i] = asFloat[i];
	return { positions, indices, vertCount, weldedVertices: cornerCount - vertCount };
}

function rehash32(uniq: Uint32Array, vertCount: number, size: number): Int32Array {
	const mask = size - 1;
	const table = new Int32Array(size).fill(-1);
	for (let id = 0; id < vertCount; id++) {
		const u3 = 3 * id;
		let h = Math.imul(uniq[u3], 0x9e3779b1) ^ Math.imul(uniq[u3 + 1], 0x85ebca77) ^ Math.imul(uniq[u3 + 2], 0xc2b2ae3d);
		h ^= h >>> 15;
		let slot = h & mask;
		while (table[slot] !== -1) slot = (slot + 1) & mask;
		table[slot] = id;
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
