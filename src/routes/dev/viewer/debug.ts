/**
 * The dev harness's handle on a viewer, for the end-to-end tests and the viewer bench
 * (window.__shellgateViewer): readiness, camera, timings, GPU memory, a scripted orbit with frame
 * times and what each object drawn while moving costs alone. Lives with the harness, not in the
 * viewer: production pages never install it.
 */
import { BufferAttribute, BufferGeometry, Mesh, Scene, type Object3D } from 'three';
import { meshMaterial } from '$lib/components/viewer/layers/mesh-layer';
import type { FrameStats, GpuMemory, ViewerScene } from '$lib/components/viewer/scene';
import type { ViewerState } from '$lib/components/viewer/viewer-state.svelte';

export interface ViewerDebug {
	readonly status: string;
	readonly triangles: number;
	readonly camera: { position: [number, number, number]; target: [number, number, number]; animating: boolean };
	readonly timings: Record<string, number>;
	readonly overlaysReady: boolean;
	readonly overlayState: 'pending' | 'ready' | 'failed';
	readonly compareStatus: string;
	readonly deviation: { max: number; mean: number; ms: number } | null;
	frameStats(): FrameStats;
	gpuMemory(): GpuMemory;
	setFlowDirection(f: [number, number, number]): void;
	/** Orbits once round the up axis in `frames` steps, each frame waited for on the GPU; moving: drawn as while dragging. */
	benchmark(frames?: number, moving?: boolean): FrameStats;
	/** ms per frame (waited for on the GPU) of each object drawn while moving, each drawn alone, keyed "layer/child type items". */
	profileMoving(frames?: number): Record<string, number>;
	render(): number;
	/** One frame drawn as while dragging, left on the canvas (for a screenshot of what orbiting shows). */
	renderMoving(): number;
	/**
	 * What a first frame of the loaded mesh costs, each geometry new to the GPU: welded and indexed,
	 * and the same triangles unwelded (9 floats each, as a binary STL holds them). ms for the first
	 * draw (upload included) and a second one (raster only), each waited for on the GPU.
	 */
	firstDrawProbe(): Record<string, number>;
}

function firstDrawProbe(s: ViewerScene): Record<string, number> {
	const b = s.meshBuffers();
	if (!b) return {};
	const r = s.host.renderer;
	const out: Record<string, number> = {};
	const unwelded = new Float32Array(3 * b.indices.length);
	for (let i = 0; i < b.indices.length; i++) {
		const v = 3 * b.indices[i];
		unwelded[3 * i] = b.positions[v];
		unwelded[3 * i + 1] = b.positions[v + 1];
		unwelded[3 * i + 2] = b.positions[v + 2];
	}
	const mat = meshMaterial();
	for (const [label, indexed] of [['welded', true], ['unwelded', false], ['welded again', true]] as const) {
		const g = new BufferGeometry();
		g.setAttribute('position', new BufferAttribute(indexed ? b.positions.slice() : unwelded, 3));
		if (indexed) g.setIndex(new BufferAttribute(b.indices.slice(), 1));
		g.boundingSphere = s.mesh.movingObjects()[0]?.geometry.boundingSphere ?? null;
		const tmp = new Scene();
		tmp.add(new Mesh(g, mat));
		const once = () => {
			const t0 = performance.now();
			r.setScissorTest(false);
			r.clear();
			r.render(tmp, s.rig.camera);
			s.host.finish();
			return performance.now() - t0;
		};
		out[`${label} first`] = once();
		out[`${label} second`] = once();
		g.dispose();
	}
	mat.dispose();
	s.requestRender();
	return out;
}

/** Orbit through `frames` renders; the figures are the orbit's frames only. */
export function orbit(s: ViewerScene, frames: number, moving: boolean): FrameStats {
	s.rig.dragging = moving;
	// One frame first, outside the figures: it waits for whatever the GPU still had queued (a
	// toggle's redraw) and uploads what only moving frames draw.
	s.renderNow(true);
	s.host.resetFrameTimes();
	const cam = s.rig.camera, target = s.rig.controls.target.clone();
	const offset = cam.position.clone().sub(target);
	const axis = cam.up.clone().normalize();
	for (let i = 0; i < frames; i++) {
		offset.applyAxisAngle(axis, (2 * Math.PI) / frames);
		cam.position.copy(target).add(offset);
		cam.lookAt(target);
		s.renderNow(true);
	}
	s.rig.dragging = false;
	const stats = s.frameStats();
	// The view at rest again, outside the figures.
	s.requestRender();
	return stats;
}

function profileMoving(s: ViewerScene, frames: number): Record<string, number> {
	const out: Record<string, number> = {};
	s.rig.dragging = true;
	s.renderNow(true);
	const r = s.host.renderer;
	const time = (label: string, obj: Object3D) => {
		const parent = obj.parent, tmp = new Scene(), wasVisible = obj.visible;
		obj.visible = true;
		tmp.add(obj);
		const once = () => {
			r.setScissorTest(false);
			r.clear();
			r.render(tmp, s.rig.camera);
			s.host.finish();
		};
		once();
		const t0 = performance.now();
		for (let f = 0; f < frames; f++) once();
		out[label] = (performance.now() - t0) / frames;
		obj.visible = wasVisible;
		parent?.add(obj);
	};
	const items = (o: Object3D) => {
		const g = (o as Mesh).geometry as BufferGeometry & { instanceCount?: number };
		return g.index ? g.index.count : (g.getAttribute('position')?.count ?? 0);
	};
	for (const m of s.mesh.movingObjects()) time(`mesh/${m.geometry.index ? 'stand-in' : 'triangles'} ${items(m) / 3} triangles`, m);
	s.overlays.drawnObjects().forEach(({ kind, object }, i) => time(`${kind}/${i} ${object.type} ${items(object)} vertices`, object));
	s.rig.dragging = false;
	s.requestRender();
	return out;
}

export function viewerDebug(s: ViewerScene, v: ViewerState): ViewerDebug {
	s.measureFirstFrame = true;
	return {
		get status() {
			return v.status;
		},
		get triangles() {
			return s.loadedTriangles;
		},
		get camera() {
			return { position: s.cameraPosition(), target: s.cameraTarget(), animating: s.animating };
		},
		get timings() {
			return { ...v.timings, meshShownAt: s.meshShown, meshDrawnAt: s.meshDrawn, firstFrameMs: s.firstFrameMs, warmedAt: s.mesh.warmedAt, warmUpMs: s.mesh.warmUpMs };
		},
		get overlaysReady() {
			return v.overlayState === 'ready';
		},
		get overlayState() {
			return v.overlayState;
		},
		get compareStatus() {
			return v.compareStatus;
		},
		get deviation() {
			return v.deviation;
		},
		frameStats: () => s.frameStats(),
		gpuMemory: () => s.gpuMemory(),
		setFlowDirection: (f) => s.setFlowDirection(f),
		benchmark: (frames = 30, moving = false) => orbit(s, frames, moving),
		profileMoving: (frames = 5) => profileMoving(s, frames),
		render: () => s.renderNow(true),
		firstDrawProbe: () => firstDrawProbe(s),
		renderMoving: () => {
			s.rig.dragging = true;
			const ms = s.renderNow(true);
			s.rig.dragging = false;
			return ms;
		}
	};
}
