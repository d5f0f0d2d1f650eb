/**
 * Bounding-volume hierarchy over axis-aligned boxes in flat arrays: a linear BVH (Morton-code
 * order, Lauterbach et al. 2009; split at the highest differing code bit, Karras 2012).
 * Build is a radix sort plus one top-down pass: O(n) after the sort, O(n) memory.
 */

export interface FlatBvh<B extends Float32Array | Float64Array = Float64Array> {
	nodeCount: number;
	/**
	 * 6 per node: minX, minY, minZ, maxX, maxY, maxZ (closed boxes). Float64 from buildBvh; float32
	 * rounded outward from buildBvhSorted (conservative, half the memory).
	 */
	bounds: B;
	/** Index of the first child (the second is firstChild + 1), or −1 for a leaf. */
	firstChild: Int32Array;
	/** Leaves: first slot in `order` and how many slots. Inner nodes cover the union of their leaves. */
	start: Uint32Array;
	count: Uint32Array;
	/** Slot → item id (empty when items were handed over already sorted). */
	order: Uint32Array;
}

const MORTON_BITS = 10;

/**
 * Largest float32 ≤ x. fround rounds to nearest; when that lands above x, step below by more than
 * one float32 ulp (ulp ≤ |x|·2⁻²³ ≈ 1.19e-7·|x|; 1e-44 covers the subnormal range) and round again.
 */
export function f32Down(x: number): number {
	const f = Math.fround(x);
	return f <= x ? f : Math.fround(x - Math.abs(x) * 2.4e-7 - 1e-44);
}
/** Smallest float32 ≥ x. */
export function f32Up(x: number): number {
	const f = Math.fround(x);
	return f >= x ? f : Math.fround(x + Math.abs(x) * 2.4e-7 + 1e-44);
}

/** Spreads the low 10 bits of v so that bit k lands on bit 3k. */
function spread3(v: number): number {
	v = (v | (v << 16)) & 0x030000ff;
	v = (v | (v << 8)) & 0x0300f00f;
	v = (v | (v << 4)) & 0x030c30c3;
	v = (v | (v << 2)) & 0x09249249;
	return v;
}

/** Morton code (30 bits) of a point already scaled to [0, 1023] per axis. */
export function morton3(qx: number, qy: number, qz: number): number {
	return (spread3(qx) | (spread3(qy) << 1) | (spread3(qz) << 2)) >>> 0;
}

/** Scale factors mapping [lo, hi] to Morton cells [0, 1023] (0 for an empty extent). */
export function mortonScale(lo: number, hi: number): number {
	return hi > lo ? ((1 << MORTON_BITS) - 1) / (hi - lo) : 0;
}

/**
 * Stable LSD radix sort of 30-bit codes (three 10-bit passes). Returns the sorted codes and the
 * order (sorted slot → original item).
 */
export function sortByCode(codesIn: Uint32Array): { codes: Uint32Array; order: Uint32Array } {
	const n = codesIn.length;
	const codes = new Uint32Array(n), order = new Uint32Array(n);
	sortByCodeInto(codesIn, null, n, codes, order, new Uint32Array(n), new Uint32Array(n));
	return { codes, order };
}

/** Node arrays a caller provides (e.g. views of SharedArrayBuffers), each for bvhMaxNodes(n) nodes. */
export interface BvhNodeStore {
	firstChild: Int32Array;
	start: Uint32Array;
	count: Uint32Array;
	/** 6 per node. */
	bounds: Float32Array;
}

/** Most nodes a hierarchy over n items can have. */
export function bvhMaxNodes(n: number): number {
	return Math.max(1, 2 * n - 1);
}

/**
 * The same stable sort as sortByCode into caller-owned arrays, so no fresh memory is touched:
 * item k has code codesIn[k] and id ids[k] (k itself when ids is null); outCodes/outOrder receive
 * the sorted codes and ids, tmpCodes/tmpOrder are scratch. All of length ≥ n; codesIn and ids may be
 * tmpCodes and tmpOrder themselves (they are read only by the first pass).
 */
export function sortByCodeInto(
	codesIn: Uint32Array,
	ids: Uint32Array | null,
	n: number,
	outCodes: Uint32Array,
	outOrder: Uint32Array,
	tmpCodes: Uint32Array,
	tmpOrder: Uint32Array
): void {
	const hist = new Uint32Array(1024);
	// Three 10-bit passes: input → out, out → tmp, tmp → out. Each loop is a function of its own so
	// a fresh process compiles it once (code after an optimised loop that has not run yet would make
	// V8 drop the loop's code at its exit).
	codeHistogram(codesIn, n, 0, hist);
	exclusiveSums(hist);
	if (ids) radixScatter(codesIn, ids, n, 0, hist, outCodes, outOrder);
	else radixScatterIdentity(codesIn, n, hist, outCodes, outOrder);
	hist.fill(0);
	codeHistogram(outCodes, n, 10, hist);
	exclusiveSums(hist);
	radixScatter(outCodes, outOrder, n, 10, hist, tmpCodes, tmpOrder);
	hist.fill(0);
	codeHistogram(tmpCodes, n, 20, hist);
	exclusiveSums(hist);
	radixScatter(tmpCodes, tmpOrder, n, 20, hist, outCodes, outOrder);
}

function codeHistogram(codes: Uint32Array, n: number, shift: number, hist: Uint32Array): void {
	for (let i = 0; i < n; i++) hist[(codes[i] >>> shift) & 1023]++;
}

function exclusiveSums(hist: Uint32Array): void {
	let sum = 0;
	for (let b = 0; b < 1024; b++) {
		const h = hist[b];
		hist[b] = sum;
		sum += h;
	}
}

function radixScatter(srcC: Uint32Array, srcO: Uint32Array, n: number, shift: number, hist: Uint32Array, dstC: Uint32Array, dstO: Uint32Array): void {
	for (let i = 0; i < n; i++) {
		const c = srcC[i];
		const dst = hist[(c >>> shift) & 1023]++;
		dstC[dst] = c;
		dstO[dst] = srcO[i];
	}
}

/** The first pass when item k's id is k itself. */
function radixScatterIdentity(srcC: Uint32Array, n: number, hist: Uint32Array, dstC: Uint32Array, dstO: Uint32Array): void {
	for (let i = 0; i < n; i++) {
		const c = srcC[i];
		const dst = hist[c & 1023]++;
		dstC[dst] = c;
		dstO[dst] = i;
	}
}

/**
 * Builds the hierarchy over items already in Morton order: `codes` sorted ascending and `boxes`
 * (6 floats per item: min xyz, max xyz) in the same order, so every pass reads memory in sequence.
 * Leaves hold at most `leafSize` items; `order` of the result is the identity (empty array).
 * With `store`, nodes are written there (the result's arrays are views of it) instead of new arrays.
 */
export function buildBvhSorted(codes: Uint32Array, boxes: Float32Array | Float64Array, leafSize = 4, store?: BvhNodeStore): FlatBvh<Float32Array> {
	return buildSorted(codes, boxes, leafSize, true, store) as FlatBvh<Float32Array>;
}

/** A FlatBvh over the first nodeCount nodes of a store that buildBvhSorted filled (e.g. in another thread). */
export function bvhFromStore(store: BvhNodeStore, nodeCount: number): FlatBvh<Float32Array> {
	return {
		nodeCount,
		bounds: store.bounds.subarray(0, 6 * nodeCount),
		firstChild: store.firstChild.subarray(0, nodeCount),
		start: store.start.subarray(0, nodeCount),
		count: store.count.subarray(0, nodeCount),
		order: new Uint32Array(0)
	};
}

function buildSorted(
	codes: Uint32Array,
	boxes: Float32Array | Float64Array,
	leafSize: number,
	f32: boolean,
	store?: BvhNodeStore
): FlatBvh<Float32Array> | FlatBvh<Float64Array> {
	const n = codes.length;
	const maxNodes = bvhMaxNodes(n);
	if (store && (store.firstChild.length < maxNodes || store.start.length < maxNodes || store.count.length < maxNodes || store.bounds.length < 6 * maxNodes)) {
		throw new Error(`BVH node store holds fewer than ${maxNodes} nodes.`);
	}
	const firstChild = store ? store.firstChild : new Int32Array(maxNodes);
	const start = store ? store.start : new Uint32Array(maxNodes);
	const count = store ? store.count : new Uint32Array(maxNodes);
	const nodeCount = splitNodes(codes, n, leafSize, firstChild, start, count);
	if (nodeCount < 0) throw new Error('BVH build stack overflow');
	// Each pass is a function of its own that returns its result, so a fresh process compiles each
	// loop once (see sortByCodeInto).
	let bounds: Float32Array | Float64Array;
	if (f32) {
		const b32 = store ? store.bounds.subarray(0, 6 * nodeCount) : new Float32Array(6 * nodeCount);
		if (boxes instanceof Float32Array) nodeBounds32(boxes, nodeCount, firstChild, start, count, b32);
		else nodeBounds32From64(boxes, nodeCount, firstChild, start, count, b32);
		bounds = b32;
	} else {
		const b64 = new Float64Array(6 * nodeCount);
		nodeBounds64(boxes as Float64Array, nodeCount, firstChild, start, count, b64);
		bounds = b64;
	}
	return {
		nodeCount,
		bounds: bounds as Float64Array,
		// Views, not copies: the unused tail was never written, so its pages were never touched.
		firstChild: firstChild.subarray(0, nodeCount),
		start: start.subarray(0, nodeCount),
		count: count.subarray(0, nodeCount),
		order: new Uint32Array(0)
	};
}

/**
 * Top-down split at the highest differing code bit (Karras 2012); children are allocated after
 * their parent, so bounds can be filled in reverse. Depth ≤ 30 bits + log2(n) for equal codes.
 * Returns the node count, or −1 when the stack would overflow.
 */
function splitNodes(codes: Uint32Array, n: number, leafSize: number, firstChild: Int32Array, start: Uint32Array, count: Uint32Array): number {
	const stack = new Int32Array(3 * 256);
	let sp = 0;
	let nodeCount = 1;
	stack[sp++] = 0;
	stack[sp++] = 0;
	stack[sp++] = n;
	while (sp > 0) {
		const e = stack[--sp];
		const s = stack[--sp];
		const node = stack[--sp];
		start[node] = s;
		count[node] = e - s;
		if (e - s <= leafSize) {
			firstChild[node] = -1;
			continue;
		}
		const c0 = codes[s], c1 = codes[e - 1];
		let mid: number;
		if (c0 === c1) mid = (s + e) >>> 1;
		else {
			const bit = 1 << (31 - Math.clz32(c0 ^ c1));
			let lo = s + 1, hi = e - 1; // first slot whose code has `bit` set
			while (lo < hi) {
				const m = (lo + hi) >>> 1;
				if (codes[m] & bit) hi = m;
				else lo = m + 1;
			}
			mid = lo;
		}
		const l = nodeCount;
		nodeCount += 2;
		firstChild[node] = l;
		if (sp + 6 > stack.length) return -1;
		stack[sp++] = l;
		stack[sp++] = s;
		stack[sp++] = mid;
		stack[sp++] = l + 1;
		stack[sp++] = mid;
		stack[sp++] = e;
	}
	return nodeCount;
}

/** Node bounds in float32 rounded outward, from float32 item boxes (exact: min/max of float32 values is a float32). */
function nodeBounds32(boxes: Float32Array, nodeCount: number, firstChild: Int32Array, start: Uint32Array, count: Uint32Array, bounds: Float32Array): void {
	for (let node = nodeCount - 1; node >= 0; node--) {
		const o = 6 * node;
		let mnx = Infinity, mny = Infinity, mnz = Infinity, mxx = -Infinity, mxy = -Infinity, mxz = -Infinity;
		const fc = firstChild[node];
		if (fc < 0) {
			for (let b = 6 * start[node], end = b + 6 * count[node]; b < end; b += 6) {
				if (boxes[b] < mnx) mnx = boxes[b];
				if (boxes[b + 1] < mny) mny = boxes[b + 1];
				if (boxes[b + 2] < mnz) mnz = boxes[b + 2];
				if (boxes[b + 3] > mxx) mxx = boxes[b + 3];
				if (boxes[b + 4] > mxy) mxy = boxes[b + 4];
				if (boxes[b + 5] > mxz) mxz = boxes[b + 5];
			}
		} else {
			const a = 6 * fc, b = a + 6;
			mnx = bounds[a] < bounds[b] ? bounds[a] : bounds[b];
			mny = bounds[a + 1] < bounds[b + 1] ? bounds[a + 1] : bounds[b + 1];
			mnz = bounds[a + 2] < bounds[b + 2] ? bounds[a + 2] : bounds[b + 2];
			mxx = bounds[a + 3] > bounds[b + 3] ? bounds[a + 3] : bounds[b + 3];
			mxy = bounds[a + 4] > bounds[b + 4] ? bounds[a + 4] : bounds[b + 4];
			mxz = bounds[a + 5] > bounds[b + 5] ? bounds[a + 5] : bounds[b + 5];
		}
		bounds[o] = f32Down(mnx); bounds[o + 1] = f32Down(mny); bounds[o + 2] = f32Down(mnz);
		bounds[o + 3] = f32Up(mxx); bounds[o + 4] = f32Up(mxy); bounds[o + 5] = f32Up(mxz);
	}
}

/** The same from float64 item boxes. */
function nodeBounds32From64(boxes: Float64Array, nodeCount: number, firstChild: Int32Array, start: Uint32Array, count: Uint32Array, bounds: Float32Array): void {
	for (let node = nodeCount - 1; node >= 0; node--) {
		const o = 6 * node;
		let mnx = Infinity, mny = Infinity, mnz = Infinity, mxx = -Infinity, mxy = -Infinity, mxz = -Infinity;
		const fc = firstChild[node];
		if (fc < 0) {
			for (let b = 6 * start[node], end = b + 6 * count[node]; b < end; b += 6) {
				if (boxes[b] < mnx) mnx = boxes[b];
				if (boxes[b + 1] < mny) mny = boxes[b + 1];
				if (boxes[b + 2] < mnz) mnz = boxes[b + 2];
				if (boxes[b + 3] > mxx) mxx = boxes[b + 3];
				if (boxes[b + 4] > mxy) mxy = boxes[b + 4];
				if (boxes[b + 5] > mxz) mxz = boxes[b + 5];
			}
		} else {
			const a = 6 * fc, b = a + 6;
			mnx = bounds[a] < bounds[b] ? bounds[a] : bounds[b];
			mny = bounds[a + 1] < bounds[b + 1] ? bounds[a + 1] : bounds[b + 1];
			mnz = bounds[a + 2] < bounds[b + 2] ? bounds[a + 2] : bounds[b + 2];
			mxx = bounds[a + 3] > bounds[b + 3] ? bounds[a + 3] : bounds[b + 3];
			mxy = bounds[a + 4] > bounds[b + 4] ? bounds[a + 4] : bounds[b + 4];
			mxz = bounds[a + 5] > bounds[b + 5] ? bounds[a + 5] : bounds[b + 5];
		}
		bounds[o] = f32Down(mnx); bounds[o + 1] = f32Down(mny); bounds[o + 2] = f32Down(mnz);
		bounds[o + 3] = f32Up(mxx); bounds[o + 4] = f32Up(mxy); bounds[o + 5] = f32Up(mxz);
	}
}

/** Node bounds in float64 from float64 item boxes. */
function nodeBounds64(boxes: Float64Array, nodeCount: number, firstChild: Int32Array, start: Uint32Array, count: Uint32Array, bounds: Float64Array): void {
	for (let node = nodeCount - 1; node >= 0; node--) {
		const o = 6 * node;
		let mnx = Infinity, mny = Infinity, mnz = Infinity, mxx = -Infinity, mxy = -Infinity, mxz = -Infinity;
		const fc = firstChild[node];
		if (fc < 0) {
			for (let b = 6 * start[node], end = b + 6 * count[node]; b < end; b += 6) {
				if (boxes[b] < mnx) mnx = boxes[b];
				if (boxes[b + 1] < mny) mny = boxes[b + 1];
				if (boxes[b + 2] < mnz) mnz = boxes[b + 2];
				if (boxes[b + 3] > mxx) mxx = boxes[b + 3];
				if (boxes[b + 4] > mxy) mxy = boxes[b + 4];
				if (boxes[b + 5] > mxz) mxz = boxes[b + 5];
			}
		} else {
			const a = 6 * fc, b = a + 6;
			mnx = bounds[a] < bounds[b] ? bounds[a] : bounds[b];
			mny = bounds[a + 1] < bounds[b + 1] ? bounds[a + 1] : bounds[b + 1];
			mnz = bounds[a + 2] < bounds[b + 2] ? bounds[a + 2] : bounds[b + 2];
			mxx = bounds[a + 3] > bounds[b + 3] ? bounds[a + 3] : bounds[b + 3];
			mxy = bounds[a + 4] > bounds[b + 4] ? bounds[a + 4] : bounds[b + 4];
			mxz = bounds[a + 5] > bounds[b + 5] ? bounds[a + 5] : bounds[b + 5];
		}
		bounds[o] = mnx; bounds[o + 1] = mny; bounds[o + 2] = mnz;
		bounds[o + 3] = mxx; bounds[o + 4] = mxy; bounds[o + 5] = mxz;
	}
}

/** Convenience: builds over `itemCount` boxes in any order; `order` maps leaf slots to items. */
export function buildBvh(boxes: Float64Array, itemCount: number, leafSize = 4): FlatBvh {
	const n = itemCount;
	let lx = Infinity, ly = Infinity, lz = Infinity, hx = -Infinity, hy = -Infinity, hz = -Infinity;
	for (let i6 = 0; i6 < 6 * n; i6 += 6) {
		const cx = boxes[i6] + boxes[i6 + 3], cy = boxes[i6 + 1] + boxes[i6 + 4], cz = boxes[i6 + 2] + boxes[i6 + 5];
		if (cx < lx) lx = cx;
		if (cx > hx) hx = cx;
		if (cy < ly) ly = cy;
		if (cy > hy) hy = cy;
		if (cz < lz) lz = cz;
		if (cz > hz) hz = cz;
	}
	const sx = mortonScale(lx, hx), sy = mortonScale(ly, hy), sz = mortonScale(lz, hz);
	const raw = new Uint32Array(n);
	for (let i = 0, i6 = 0; i < n; i++, i6 += 6) {
		raw[i] = morton3(((boxes[i6] + boxes[i6 + 3] - lx) * sx) | 0, ((boxes[i6 + 1] + boxes[i6 + 4] - ly) * sy) | 0, ((boxes[i6 + 2] + boxes[i6 + 5] - lz) * sz) | 0);
	}
	const { codes, order } = sortByCode(raw);
	const sorted = new Float64Array(6 * n);
	for (let k = 0; k < n; k++) for (let d = 0; d < 6; d++) sorted[6 * k + d] = boxes[6 * order[k] + d];
	const bvh = buildSorted(codes, sorted, leafSize, false) as FlatBvh<Float64Array>;
	bvh.order = order;
	return bvh;
}
