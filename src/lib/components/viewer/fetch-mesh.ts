/**
 * Mesh bytes with download progress, and a large binary STL's triangles straight from its bytes.
 * Used by the page (the main mesh: fetched while the parse worker's module loads, and drawn from
 * its own triangles before the worker has read it) and by the parse worker (compare revisions).
 */

/** Fetches url, calling progress at most every 50 ms and once at the end. */
export async function fetchBytes(url: string, progress: (loaded: number, total: number | null) => void): Promise<Uint8Array> {
	const res = await fetch(url, { credentials: 'same-origin' });
	if (!res.ok) throw new Error(`the server answered ${res.status} ${res.statusText} for the mesh file`);
	const header = res.headers.get('content-length');
	const total = header && !res.headers.get('content-encoding') ? Number(header) : null;
	if (!res.body) return new Uint8Array(await res.arrayBuffer());
	const reader = res.body.getReader();
	let buf = total ? new Uint8Array(total) : new Uint8Array(1 << 20);
	let loaded = 0, lastPost = 0;
	for (;;) {
		const { done, value } = await reader.read();
		if (done) break;
		if (loaded + value.length > buf.length) {
			const grown = new Uint8Array(Math.max(2 * buf.length, loaded + value.length));
			grown.set(buf.subarray(0, loaded));
			buf = grown;
		}
		buf.set(value, loaded);
		loaded += value.length;
		const now = performance.now();
		if (now - lastPost > 50) {
			progress(loaded, total);
			lastPost = now;
		}
	}
	progress(loaded, total ?? loaded);
	return buf.subarray(0, loaded);
}

/**
 * Binary STL straight from the bytes, one unwelded triangle after another (9 floats each), for the
 * first frame while the reader welds the corners: tens of milliseconds for a million triangles.
 * Null for anything else (ASCII STL, PLY, OBJ; the binary size rule 84 + 50·n must hold exactly),
 * for fewer than minFaces or more than maxFaces triangles, or for a non-finite coordinate.
 */
export function previewTriangles(bytes: Uint8Array, fileName: string, minFaces: number, maxFaces: number): Float32Array | null {
	if (!/\.stl$/i.test(fileName) || bytes.length < 84) return null;
	const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
	const n = dv.getUint32(80, true);
	if (84 + 50 * n !== bytes.length || n < minFaces || n > maxFaces) return null;
	const out = new Float32Array(9 * n);
	for (let t = 0, o = 84 + 12; t < n; t++, o += 50) {
		for (let k = 0; k < 9; k++) out[9 * t + k] = dv.getFloat32(o + 4 * k, true);
	}
	for (let i = 0; i < out.length; i++) if (!Number.isFinite(out[i])) return null;
	return out;
}
