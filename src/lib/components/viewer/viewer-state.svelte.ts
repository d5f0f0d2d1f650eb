/**
 * The viewer's state, one instance per viewer: loading and overlays, toggles, section, compare and
 * deviation, selection and hover. It drives the three workers (mesh, compare revision, deviation)
 * through runWorker and hands their results to the scene; MeshViewer.svelte only lays it out.
 * Each load method returns the function that stops its worker, for an effect's cleanup.
 */
import type { InspectionReport } from '$lib/mesh/report';
import type { MeshOverlays } from '$lib/mesh/overlays';
import { KIND_ORDER, type OverlayKind } from './palette';
import type { OverlayDraw } from './overlay-draw';
import { PROXY_ABOVE, type CellFieldReply, type CellFieldRequest, type DeviationReply, type DeviationRequest, type LoadReply, type LoadRequest } from './protocol';
import type { CompareMode, PickResult, SectionAxis, ViewerScene } from './scene';
import { runWorker } from './worker-task';
import { fetchBytes, previewTriangles } from './fetch-mesh';

/** Longest the reader waits for the first frame of a large binary STL's own triangles. */
const FIRST_FRAME_WAIT_MS = 1500;

export type ViewerStatus = 'loading' | 'parsing' | 'ready' | 'error';
export type OverlayState = 'pending' | 'ready' | 'failed';

const parseWorker = () => new Worker(new URL('./parse-worker.ts', import.meta.url), { type: 'module' });
const deviationWorker = () => new Worker(new URL('./deviation-worker.ts', import.meta.url), { type: 'module' });
const cellFieldWorker = () => new Worker(new URL('./cell-field-worker.ts', import.meta.url), { type: 'module' });

export class ViewerState {
	status = $state<ViewerStatus>('loading');
	progress = $state<{ loaded: number; total: number | null }>({ loaded: 0, total: null });
	errorMessage = $state('');
	overlays = $state.raw<MeshOverlays | null>(null);
	/** Whether the overlays are drawn: the one readiness signal for tests (also on the element as data-overlays). */
	overlayState = $state<OverlayState>('pending');
	timings = $state.raw<Record<string, number>>({});
	triCount = $state(0);
	sampled = $state.raw<ViewerScene['sampled']>({});

	visible = $state<Record<OverlayKind, boolean>>(Object.fromEntries(KIND_ORDER.map((k) => [k, true])) as Record<OverlayKind, boolean>);
	expanded = $state<Record<string, boolean>>({});
	wireframe = $state(false);
	shellColours = $state(false);
	helpOpen = $state(false);

	sectionOn = $state(false);
	sectionAxis = $state<SectionAxis>('x');
	sectionT = $state(0.5);
	sectionFlip = $state(false);

	hover = $state<(PickResult & { x: number; y: number }) | null>(null);
	selectedKey = $state<string | null>(null);

	/** The chosen compare revision's url; '' is compare off, null the one the page opened with. */
	compareUrl = $state<string | null>(null);
	compareMode = $state<CompareMode>('side');
	compareStatus = $state<'idle' | 'loading' | 'ready' | 'error'>('idle');
	compareError = $state('');
	deviation = $state.raw<{ max: number; mean: number; ms: number } | null>(null);
	deviationProgress = $state<number | null>(null);

	/** Colouring by wall thickness or gap width in cells ('off' keeps the other colourings). */
	cellColour = $state<'off' | 'wall' | 'gap'>('off');
	cellFieldStatus = $state<'idle' | 'measuring' | 'ready' | 'error'>('idle');
	cellFieldError = $state('');

	private draw: OverlayDraw | null = null;

	get progressShare(): number | null {
		return this.progress.total ? Math.min(1, this.progress.loaded / this.progress.total) : null;
	}

	/**
	 * Fetches, parses and draws the mesh, then its overlays. The page fetches the bytes itself while
	 * the parse worker's module loads, draws a large binary STL from its own triangles at once and
	 * hands the bytes over (transferred) for the reader.
	 */
	loadMesh(s: ViewerScene, req: LoadRequest): () => void {
		this.status = 'loading';
		this.progress = { loaded: 0, total: null };
		this.overlays = null;
		this.draw = null;
		this.overlayState = 'pending';
		this.errorMessage = '';
		const started = performance.now();
		this.timings = { requestedAt: started };
		let stopped = false;
		const request = fetchBytes(req.url, (loaded, total) => {
			if (!stopped) this.progress = { loaded, total };
		}).then(
			(bytes) => {
				const fetchMs = performance.now() - started;
				// Stopped, or the worker already failed (it may crash while its module loads).
				if (stopped || this.overlayState === 'failed') return null;
				this.status = 'parsing';
				const t = performance.now();
				const preview = previewTriangles(bytes, req.fileName, PROXY_ABOVE + 1, req.maxFaces);
				if (preview) {
					const read = performance.now() - t;
					s.setPreview(preview);
					this.timings = { ...this.timings, previewMs: performance.now() - t, previewReadMs: read, previewAt: performance.now() };
				}
				const msg = { request: { ...req, bytes, fetchMs }, transfer: [bytes.buffer as ArrayBuffer] };
				// The reader waits for the first frame of the file's triangles: software WebGL rasterises on
				// the same cores, and with the reader beside it that frame took 0.5–0.6 s instead of 0.25–0.5 s.
				// At most FIRST_FRAME_WAIT_MS, so a page whose frames never come (a hidden tab) still loads.
				return preview ? Promise.race([s.meshFrame(), new Promise((ok) => setTimeout(ok, FIRST_FRAME_WAIT_MS))]).then(() => msg) : msg;
			},
			(e: Error) => {
				if (stopped) return null;
				this.status = 'error';
				this.errorMessage = `Could not download the mesh: ${e.message}.`;
				this.overlayState = 'failed';
				return null;
			}
		);
		const stop = runWorker<LoadRequest, LoadReply>(
			parseWorker,
			request,
			[],
			(m, done) => {
				if (m.type === 'progress') this.progress = { loaded: m.loaded, total: m.total };
				else if (m.type === 'parsing') this.status = 'parsing';
				else if (m.type === 'mesh') {
					const tMesh = performance.now();
					s.setMesh(m.positions, m.indices, m.bvh);
					this.triCount = m.indices.length / 3;
					this.timings = { ...this.timings, fetchMs: m.fetchMs, parseMs: m.parseMs, bvhMs: m.bvhMs, bytes: m.bytes, toDrawnMs: performance.now() - started, meshAt: tMesh, setMeshMs: performance.now() - tMesh };
					this.status = 'ready';
				} else if (m.type === 'proxy') {
					s.setProxy(m.positions, m.indices);
					this.timings = { ...this.timings, proxyMs: m.ms, proxyTriangles: m.indices.length / 3 };
				} else if (m.type === 'bvh') {
					s.setBvh(m.bvh);
					this.timings = { ...this.timings, bvhMs: m.ms, bvhAt: performance.now() };
					done();
				} else if (m.type === 'overlays') {
					const tOv = performance.now();
					this.overlays = m.overlays;
					this.draw = m.draw;
					s.setOverlays(m.overlays, m.draw);
					this.sampled = { ...s.sampled };
					this.timings = { ...this.timings, overlaysMs: m.ms, overlayDrawMs: m.drawMs, overlaysAt: tOv, setOverlaysMs: performance.now() - tOv };
					this.overlayState = 'ready';
					// A large mesh's picking tree comes last; a small one's came with the mesh.
					if (s.pickReady) done();
				} else if (m.type === 'error') {
					if (this.status !== 'ready') this.status = 'error';
					this.errorMessage = m.message;
					this.overlayState = 'failed';
					done();
				}
			},
			(message) => {
				if (this.status !== 'ready') this.status = 'error';
				this.errorMessage = `The mesh loader stopped: ${message}.`;
				this.overlayState = 'failed';
			}
		);
		return () => {
			stopped = true;
			stop();
		};
	}

	/** A report that arrives after the mesh (or is replaced) brings its own self-intersection sample. */
	applyReportSample(s: ViewerScene, r: InspectionReport): void {
		const o = this.overlays;
		if (!o || !this.draw) return;
		const sample = r.selfIntersectionSample;
		if (o.selfIntersectionFaces.length === 2 * sample.length && sample.every((x, i) => o.selfIntersectionFaces[2 * i] === x.a && o.selfIntersectionFaces[2 * i + 1] === x.b)) return;
		const points = new Float32Array(3 * sample.length), faces = new Uint32Array(2 * sample.length);
		sample.forEach((x, i) => {
			points.set(x.point, 3 * i);
			faces[2 * i] = x.a;
			faces[2 * i + 1] = x.b;
		});
		this.overlays = { ...o, selfIntersectionPoints: points, selfIntersectionFaces: faces };
		// A sample of at most a few thousand pairs: its index buffer is cheap to make here.
		this.draw = { ...this.draw, selfIntersectionIndex: s.faceIndexOf(faces) };
		s.setOverlays(this.overlays, this.draw);
		this.sampled = { ...s.sampled };
	}

	/** Loads a compare revision (mesh only) and draws it in the current compare mode. */
	loadCompare(s: ViewerScene, req: LoadRequest): () => void {
		this.compareStatus = 'loading';
		this.deviation = null;
		const stop = runWorker<LoadRequest, LoadReply>(
			parseWorker,
			{ ...req, overlays: false },
			[],
			(m, done) => {
				if (m.type === 'mesh') {
					s.setCompare(m.positions, m.indices, this.compareMode);
					this.compareStatus = 'ready';
					done();
				} else if (m.type === 'error') {
					this.compareStatus = 'error';
					this.compareError = m.message;
					done();
				}
			},
			(message) => {
				this.compareStatus = 'error';
				this.compareError = `The compare loader stopped: ${message}.`;
			}
		);
		return () => {
			stop();
			s.setCompare(null, null, null);
		};
	}

	/** Distance of each vertex to the compare revision, computed once per pair when first asked for. */
	measureDeviation(s: ViewerScene): (() => void) | undefined {
		const a = s.meshBuffers(), b = s.compareBuffers();
		if (!a || !b) return;
		this.deviationProgress = 0;
		// Copies: the page keeps its buffers for drawing and picking.
		const pa = a.positions.slice(), ia = a.indices.slice(), pb = b.positions.slice(), ib = b.indices.slice();
		return runWorker<DeviationRequest, DeviationReply>(
			deviationWorker,
			{ type: 'deviation', positions: pa, indices: ia, targetPositions: pb, targetIndices: ib },
			[pa.buffer, ia.buffer, pb.buffer, ib.buffer],
			(m, done) => {
				if (m.type === 'progress') this.deviationProgress = m.done / m.total;
				else if (m.type === 'result') {
					s.setDeviation(m.distances, m.faceDistances, m.max);
					this.deviation = { max: m.max, mean: m.mean, ms: m.ms };
					this.deviationProgress = null;
					done();
				} else {
					this.compareError = m.message;
					this.deviationProgress = null;
					done();
				}
			},
			(message) => {
				this.compareError = `The deviation worker stopped: ${message}.`;
				this.deviationProgress = null;
			}
		);
	}

	/** Wall and gap per vertex in cells, measured once per mesh in a worker when first asked for. */
	measureCellField(s: ViewerScene, cellSize: number, scaleCells: number): (() => void) | undefined {
		const b = s.meshBuffers();
		if (!b || !(cellSize > 0)) return;
		this.cellFieldStatus = 'measuring';
		const positions = b.positions.slice(), indices = b.indices.slice();
		// The report's range: 8 cells (thickness.ts cellSizeMaxDistance's default).
		const maxDistance = 8 * cellSize;
		return runWorker<CellFieldRequest, CellFieldReply>(
			cellFieldWorker,
			{ type: 'cell-field', positions, indices, cellSize, maxDistance },
			[positions.buffer, indices.buffer],
			(m, done) => {
				if (m.type === 'result') {
					s.setCellField({ wall: m.wall, gap: m.gap, scaleCells });
					this.cellFieldStatus = 'ready';
				} else {
					this.cellFieldError = m.message;
					this.cellFieldStatus = 'error';
				}
				done();
			},
			(message) => {
				this.cellFieldError = `The wall and gap worker stopped: ${message}.`;
				this.cellFieldStatus = 'error';
			}
		);
	}
}
