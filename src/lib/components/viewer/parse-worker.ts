/**
 * Loads one mesh off the main thread: fetch with progress, the engine's own readers, float32
 * buffers and a three-mesh-bvh tree for picking, then the defect overlays and their draw buffers
 * (overlay-draw.ts), so the page only wraps finished arrays. Everything posted is transferred. The worker keeps a copy of the indices for the overlay stage so the mesh can be
 * posted (and drawn) before the overlays are done.
 */
import { BufferAttribute, BufferGeometry } from 'three';
import { MeshBVH } from 'three-mesh-bvh';
import { readMesh } from '$lib/mesh/read';
import { MeshReadError } from '$lib/mesh/types';
import { computeOverlays, overlayTransferables } from '$lib/mesh/overlays';
import { clusterProxy } from './proxy';
import { buildOverlayDraw, drawTransferables } from './overlay-draw';
import type { BvhData, LoadFailure, LoadReply, LoadRequest } from './protocol';

const PROXY_ABOVE = 300_000;
// Drawn while the camera moves. At 40,000 triangles a moving frame of the bench part took 76 ms with every overlay off (13 fps, software WebGL on a loaded 2-core machine).
const PROXY_TARGET = 40_000;

const post = (msg: LoadReply, transfer: Transferable[] = []) => (self as unknown as Worker).postMessage(msg, transfer);

function fail(kind: LoadFailure, message: string): void {
	post({ type: 'error', kind, message });
}

function isAllocationFailure(e: unknown): boolean {
	return e instanceof RangeError && /alloc|array buffer|invalid array length|invalid typed array length/i.test(e.message);
}

async function fetchBytes(url: string): Promise<Uint8Array> {
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
			post({ type: 'progress', loaded, total });
			lastPost = now;
		}
	}
	post({ type: 'progress', loaded, total: total ?? loaded });
	return buf.subarray(0, loaded);
}

async function load(req: LoadRequest): Promise<void> {
	const t0 = performance.now();
	let bytes: Uint8Array;
	try {
		bytes = await fetchBytes(req.url);
	} catch (e) {
		return fail('fetch', `Could not download the mesh: ${(e as Error).message}.`);
	}
	const fetchMs = performance.now() - t0;
	post({ type: 'parsing' });
	const t1 = performance.now();
	let parsed;
	try {
		parsed = readMesh(bytes, req.fileName, { maxFaces: req.maxFaces });
	} catch (e) {
		if (isAllocationFailure(e)) return fail('memory', 'The browser ran out of memory while reading this mesh. The inspection report is complete and unaffected.');
		const msg = (e as Error).message;
		if (e instanceof MeshReadError && /limit|more than|too many/i.test(msg)) {
			return fail('too-large', `This mesh is too large to show in the browser (the view stops at ${req.maxFaces.toLocaleString('en')} triangles): ${msg}. The inspection report is complete and unaffected.`);
		}
		return fail('read', `The mesh could not be read: ${msg}`);
	}
	const triCount = parsed.indices.length / 3;
	if (triCount > req.maxFaces) {
		return fail('too-large', `This mesh has ${triCount.toLocaleString('en')} triangles, more than the browser view shows (${req.maxFaces.toLocaleString('en')}). The inspection report is complete and unaffected.`);
	}
	let positions: Float32Array, indices: Uint32Array, keptIndices: Uint32Array, bvh: BvhData;
	const parseMs = performance.now() - t1;
	const t2 = performance.now();
	try {
		positions = Float32Array.from(parsed.positions);
		indices = parsed.indices;
		keptIndices = req.overlays === false ? indices : indices.slice();
		const geometry = new BufferGeometry();
		geometry.setAttribute('position', new BufferAttribute(positions, 3));
		geometry.setIndex(new BufferAttribute(indices, 1));
		// indirect: the tree keeps its own triangle order, so the index buffer and face ids stay ours.
		const tree = new MeshBVH(geometry, { indirect: true });
		const s = MeshBVH.serialize(tree, { cloneBuffers: false }) as unknown as BvhData;
		bvh = { version: s.version, roots: s.roots, index: null, indirectBuffer: s.indirectBuffer };
	} catch (e) {
		if (isAllocationFailure(e)) return fail('memory', 'The browser ran out of memory while preparing this mesh for display. The inspection report is complete and unaffected.');
		throw e;
	}
	const bvhMs = performance.now() - t2;
	const t4 = performance.now();
	// Software WebGL draws about 2–4 M triangles a second here; a stand-in keeps orbiting smooth.
	const proxy = triCount > PROXY_ABOVE ? clusterProxy(positions, indices, PROXY_TARGET) : null;
	const proxyMs = performance.now() - t4;
	const transfer: Transferable[] = [positions.buffer, indices.buffer, ...bvh.roots];
	if (bvh.indirectBuffer) transfer.push(bvh.indirectBuffer.buffer);
	if (proxy) transfer.push(proxy.positions.buffer, proxy.indices.buffer);
	post({ type: 'mesh', positions, indices, bvh, proxy, fetchMs, parseMs, bvhMs, proxyMs, bytes: bytes.length }, transfer);

	if (req.overlays === false) return;
	const t3 = performance.now();
	try {
		const overlays = computeOverlays({ positions: parsed.positions, indices: keptIndices }, req.report, { minEdgeLength: req.minEdgeLength });
		const t5 = performance.now();
		const draw = buildOverlayDraw(overlays, parsed.positions, keptIndices);
		post({ type: 'overlays', overlays, draw, ms: t5 - t3, drawMs: performance.now() - t5 }, [...overlayTransferables(overlays), ...drawTransferables(draw)]);
	} catch (e) {
		fail(isAllocationFailure(e) ? 'memory' : 'read', `Defect overlays could not be computed: ${(e as Error).message}`);
	}
}

self.onmessage = (ev: MessageEvent<LoadRequest>) => {
	if (ev.data?.type === 'load') {
		load(ev.data).catch((e) => fail('read', `Unexpected error while loading the mesh: ${(e as Error).message}`));
	}
};
