/**
 * Loads one mesh off the main thread: the bytes (fetched here with progress, or handed over by the
 * page, which fetched them and drew their triangles while this module loaded), then, in the order
 * the page needs them: the engine's reader (welded float32 buffers), the defect overlays with their draw buffers (overlay-draw.ts), the
 * coarse stand-in for orbiting and last the three-mesh-bvh picking tree (small meshes get their tree
 * with the mesh). Everything posted is transferred; the worker keeps its own copies for the later stages.
 */
import { BufferAttribute, BufferGeometry } from 'three';
import { MeshBVH } from 'three-mesh-bvh';
import { readMesh } from '$lib/mesh/read';
import { MeshReadError } from '$lib/mesh/types';
import { computeOverlays, overlayTransferables } from '$lib/mesh/overlays';
import { fetchBytes } from './fetch-mesh';
import { clusterProxy } from './proxy';
import { buildOverlayDraw, drawTransferables } from './overlay-draw';
import { PROXY_ABOVE, type BvhData, type LoadFailure, type LoadReply, type LoadRequest } from './protocol';

// Drawn while the camera moves. At 40,000 triangles a moving frame of the bench part took 76 ms with every overlay off (13 fps, software WebGL on a loaded 2-core machine).
const PROXY_TARGET = 40_000;

const post = (msg: LoadReply, transfer: Transferable[] = []) => (self as unknown as Worker).postMessage(msg, transfer);

function fail(kind: LoadFailure, message: string): void {
	post({ type: 'error', kind, message });
}

function isAllocationFailure(e: unknown): boolean {
	return e instanceof RangeError && /alloc|array buffer|invalid array length|invalid typed array length/i.test(e.message);
}

async function load(req: LoadRequest): Promise<void> {
	const t0 = performance.now();
	let bytes: Uint8Array;
	if (req.bytes) bytes = req.bytes;
	else {
		try {
			bytes = await fetchBytes(req.url, (loaded, total) => post({ type: 'progress', loaded, total }));
		} catch (e) {
			return fail('fetch', `Could not download the mesh: ${(e as Error).message}.`);
		}
	}
	const fetchMs = req.fetchMs ?? performance.now() - t0;
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
	const parseMs = performance.now() - t1;
	const large = triCount > PROXY_ABOVE;
	let positions: Float32Array, indices: Uint32Array;
	try {
		positions = Float32Array.from(parsed.positions);
		indices = parsed.indices;
		// Small meshes come with their picking tree at once; a large one is drawn first and its tree,
		// stand-in and overlays follow (the page copies nothing: the worker posts copies and keeps its own).
		const bvh = large || req.overlays === false ? null : buildBvh(positions, indices);
		const posted = { positions: positions.slice(), indices: indices.slice() };
		const transfer: Transferable[] = [posted.positions.buffer, posted.indices.buffer];
		if (bvh) transfer.push(...bvhTransferables(bvh.data));
		post({ type: 'mesh', ...posted, bvh: bvh?.data ?? null, fetchMs, parseMs, bvhMs: bvh?.ms ?? 0, bytes: bytes.length }, transfer);
	} catch (e) {
		if (isAllocationFailure(e)) return fail('memory', 'The browser ran out of memory while preparing this mesh for display. The inspection report is complete and unaffected.');
		throw e;
	}
	if (req.overlays === false) return;
	try {
		const t3 = performance.now();
		const overlays = computeOverlays({ positions: parsed.positions, indices }, req.report, { minEdgeLength: req.minEdgeLength });
		const t5 = performance.now();
		const draw = buildOverlayDraw(overlays, parsed.positions, indices);
		post({ type: 'overlays', overlays, draw, ms: t5 - t3, drawMs: performance.now() - t5 }, [...overlayTransferables(overlays), ...drawTransferables(draw)]);
		if (large) {
			// Software WebGL draws about 2–4 M triangles a second here; a stand-in keeps orbiting smooth.
			const t4 = performance.now();
			const proxy = clusterProxy(positions, indices, PROXY_TARGET);
			if (proxy) post({ type: 'proxy', ...proxy, ms: performance.now() - t4 }, [proxy.positions.buffer, proxy.indices.buffer]);
		}
	} catch (e) {
		fail(isAllocationFailure(e) ? 'memory' : 'read', `Defect overlays could not be computed: ${(e as Error).message}`);
		return;
	}
	if (large) {
		try {
			const bvh = buildBvh(positions, indices);
			post({ type: 'bvh', bvh: bvh.data, ms: bvh.ms }, bvhTransferables(bvh.data));
		} catch (e) {
			fail(isAllocationFailure(e) ? 'memory' : 'read', `The picking tree could not be built: ${(e as Error).message}`);
		}
	}
}

/** The three-mesh-bvh tree for picking, indirect: the tree keeps its own triangle order, so the index buffer and face ids stay ours. */
function buildBvh(positions: Float32Array, indices: Uint32Array): { data: BvhData; ms: number } {
	const t = performance.now();
	const geometry = new BufferGeometry();
	geometry.setAttribute('position', new BufferAttribute(positions, 3));
	geometry.setIndex(new BufferAttribute(indices, 1));
	const tree = new MeshBVH(geometry, { indirect: true });
	const s = MeshBVH.serialize(tree, { cloneBuffers: true }) as unknown as BvhData;
	return { data: { version: s.version, roots: s.roots, index: null, indirectBuffer: s.indirectBuffer }, ms: performance.now() - t };
}

function bvhTransferables(b: BvhData): Transferable[] {
	return b.indirectBuffer ? [...b.roots, b.indirectBuffer.buffer] : [...b.roots];
}

self.onmessage = (ev: MessageEvent<LoadRequest>) => {
	if (ev.data?.type === 'load') {
		load(ev.data).catch((e) => fail('read', `Unexpected error while loading the mesh: ${(e as Error).message}`));
	}
};
