/**
 * The viewer's three.js scene, composed of layers with one job each (layers/): the renderer host
 * (canvas, on-demand frames), the camera rig, the mesh, the overlays and highlight, the compare
 * revision, the comment pins and the axis inset. This class wires them together, owns the section
 * plane and decides what a frame draws: while the camera moves, the mesh's stand-in and the
 * overlays' samples at a share of the resolution; at rest, everything. Nothing redraws while
 * nothing changes. Each layer frees its own GPU objects in dispose().
 */
import { Plane, Scene, Vector2, Vector3, type Box3, type Sphere } from 'three';
import type { MeshOverlays } from '$lib/mesh/overlays';
import type { BvhData } from './protocol';
import type { OverlayDraw } from './overlay-draw';
import type { OverlayKind } from './palette';
import { AxisInset } from './layers/axis-inset';
import { CameraRig, type ViewName } from './layers/camera-rig';
import { CompareLayer, addLights, type CompareMode } from './layers/compare-layer';
import { MeshLayer, type ColourMode, type MeshHit } from './layers/mesh-layer';
import { OverlayLayer, type Focus } from './layers/overlay-layer';
import { PinLayer, type PinInput } from './layers/pin-layer';
import { RendererHost, type FrameStats, type GpuMemory } from './layers/renderer-host';

export type { ColourMode, CompareMode, Focus, FrameStats, GpuMemory, PinInput, ViewName };
export type SectionAxis = 'x' | 'y' | 'z';
export type PickResult = MeshHit;

/** Share of the resting resolution (per axis) moving frames of a large mesh are drawn at: a quarter of the pixels. */
const MOVING_RESOLUTION = 0.5;

export class ViewerScene {
	readonly host: RendererHost;
	readonly rig: CameraRig;
	readonly mesh: MeshLayer;
	readonly overlays: OverlayLayer;
	readonly compare: CompareLayer;
	private scene = new Scene();
	private pins = new PinLayer();
	private inset: AxisInset;
	private section = new Plane(new Vector3(-1, 0, 0), 0);
	private sectionOn = false;
	private bboxMin = new Vector3();
	private bboxMax = new Vector3();
	/** When the first frame with the mesh in it was finished (performance.now); waited for on the GPU when measureFirstFrame is set (the dev harness). */
	meshDrawn = 0;
	/** How long that first frame took (upload and raster included when measureFirstFrame is set). */
	firstFrameMs = 0;
	measureFirstFrame = false;
	private drawnWaiters: (() => void)[] = [];
	/** Resolves once a frame with the mesh in it has been drawn. */
	meshFrame(): Promise<void> {
		return this.meshDrawn ? Promise.resolve() : new Promise((ok) => this.drawnWaiters.push(ok));
	}

	constructor(container: HTMLElement, flowDirection: [number, number, number]) {
		this.host = new RendererHost(container, (finish) => this.draw(finish), () => this.rig.setAspect(this.viewAspect()));
		this.rig = new CameraRig(this.host.renderer.domElement, () => this.requestRender(), () => this.viewAspect());
		addLights(this.scene);
		this.mesh = new MeshLayer(
			(obj) => this.host.renderer.compileAsync(obj, this.rig.camera, this.scene),
			() => this.requestRender(),
			(box, sphere) => this.onBounds(box, sphere)
		);
		this.mesh.warmUp(
			(obj, scene, camera) => this.host.renderer.compileAsync(obj, camera, scene),
			(scene, camera) => {
				// Drawn and cleared in one task: nothing of it reaches the screen.
				const r = this.host.renderer;
				if (this.host.isDisposed) return;
				r.setScissorTest(false);
				r.render(scene, camera);
				r.clear();
				this.requestRender();
			}
		);
		this.overlays = new OverlayLayer(this.mesh);
		this.compare = new CompareLayer(this.scene);
		this.scene.add(this.mesh.group, this.overlays.group, this.pins.group);
		this.inset = new AxisInset(flowDirection);
		this.rig.setAspect(this.viewAspect());
	}

	private onBounds(box: Box3, sphere: Sphere): void {
		this.bboxMin.copy(box.min);
		this.bboxMax.copy(box.max);
		this.meshDrawn = 0;
		this.rig.setBounds(box, sphere);
		this.updateSection();
		this.rig.fit(false);
	}

	/** Aspect of one view: half the canvas when two revisions stand side by side. */
	private viewAspect(): number {
		return (this.compare.sideBySide ? this.host.width / 2 : this.host.width) / this.host.height;
	}

	setFlowDirection(flow: [number, number, number]): void {
		this.inset.setFlowDirection(flow);
		this.requestRender();
	}

	setPreview(positions: Float32Array): void {
		this.mesh.setPreview(positions);
	}
	setMesh(positions: Float32Array, indices: Uint32Array, bvh: BvhData | null): void {
		this.mesh.setMesh(positions, indices, bvh);
		this.requestRender();
	}
	setBvh(bvh: BvhData): void {
		this.mesh.setBvh(bvh);
	}
	setProxy(positions: Float32Array, indices: Uint32Array): void {
		this.mesh.setProxy(positions, indices);
	}
	get pickReady(): boolean {
		return this.mesh.pickReady;
	}
	get loadedTriangles(): number {
		return this.mesh.triangles;
	}
	/** When the mesh's shaders were ready and its first frame asked for (performance.now). */
	get meshShown(): number {
		return this.mesh.shownAt;
	}
	/** Bounding-box diagonal of the loaded mesh, model units. */
	get diagonal(): number {
		return this.bboxMax.distanceTo(this.bboxMin);
	}
	get sampled(): OverlayLayer['sampled'] {
		return this.overlays.sampled;
	}

	/** Draws the overlays from buffers the parse worker finished (overlay-draw.ts): no per-item work here. */
	setOverlays(o: MeshOverlays, d: OverlayDraw): void {
		this.mesh.setFaceShells(o.faceShell);
		this.overlays.setOverlays(o, d, this.diagonal);
		this.requestRender();
	}
	setOverlayVisible(kind: OverlayKind, on: boolean): void {
		this.overlays.setVisible(kind, on);
		this.requestRender();
	}
	/** Centre and size of the listed faces, for flying to them. */
	faceFocus(faces: Uint32Array): Focus | null {
		const b = this.mesh.faceBounds(faces);
		return b ? { ...b, faces } : null;
	}
	faceIndexOf(faces: Uint32Array): Uint32Array {
		return this.mesh.faceIndexOf(faces);
	}

	setWireframe(on: boolean): void {
		this.mesh.setWireframe(on);
		this.requestRender();
	}
	setColourMode(mode: ColourMode): void {
		this.mesh.setColourMode(mode);
		this.requestRender();
	}
	setDeviation(distances: Float32Array | null, faces: Float32Array | null, max: number): void {
		this.mesh.setDeviation(distances, faces, max);
		if (this.compare.mode === 'deviation') this.mesh.setColourMode(distances ? 'deviation' : 'plain');
		this.requestRender();
	}
	/** Wall and gap per vertex in cells; scaleCells is the value drawn at the bright end of the ramp. */
	setCellField(field: { wall: Float32Array; gap: Float32Array; scaleCells: number } | null): void {
		this.mesh.setCellField(field);
		this.requestRender();
	}
	/** Positions and indices of the loaded mesh: the live arrays behind the GPU buffers; callers copy before transferring. */
	meshBuffers(): { positions: Float32Array; indices: Uint32Array } | null {
		return this.mesh.buffers();
	}

	setSection(on: boolean, axis: SectionAxis, t: number, flip = false): void {
		this.sectionOn = on;
		const a = axis === 'x' ? 0 : axis === 'y' ? 1 : 2;
		const n = new Vector3();
		n.setComponent(a, flip ? 1 : -1);
		const lo = this.bboxMin.getComponent(a), hi = this.bboxMax.getComponent(a);
		const at = lo + (hi - lo) * t;
		// Keeps points with n · x + c ≥ 0: the side below `at` (or above when flipped).
		this.section.set(n, flip ? -at : at);
		this.updateSection();
	}
	private updateSection(): void {
		this.host.renderer.clippingPlanes = this.sectionOn ? [this.section] : [];
		this.requestRender();
	}
	/** Lowest and highest coordinate of the loaded mesh along an axis, in model units. */
	sectionRange(axis: SectionAxis): [number, number] {
		const a = axis === 'x' ? 0 : axis === 'y' ? 1 : 2;
		return [this.bboxMin.getComponent(a), this.bboxMax.getComponent(a)];
	}

	setCompare(positions: Float32Array | null, indices: Uint32Array | null, mode: CompareMode | null): void {
		this.compare.set(positions, indices, null);
		this.setCompareMode(mode);
	}
	setCompareMode(mode: CompareMode | null): void {
		const wasSide = this.compare.sideBySide;
		this.compare.setMode(mode);
		this.rig.setAspect(this.viewAspect());
		// The view width halves or doubles: frame the part again.
		if (wasSide !== this.compare.sideBySide && this.mesh.triangles) this.rig.fit();
		if (mode === 'deviation' && this.compare.loaded && this.mesh.hasDeviation) this.mesh.setColourMode('deviation');
		else if (this.mesh.colour === 'deviation') this.mesh.setColourMode('plain');
		this.requestRender();
	}
	compareBuffers(): { positions: Float32Array; indices: Uint32Array } | null {
		return this.compare.buffers();
	}

	setPins(pins: PinInput[]): void {
		this.pins.setPins(pins);
		this.requestRender();
	}

	fit(animate = true): void {
		this.rig.fit(animate);
	}
	view(name: ViewName, animate = true): void {
		this.rig.view(name, animate);
	}
	/** Flies to frame a finding and highlights it. */
	flyTo(focus: Focus): void {
		this.rig.flyTo(focus.center, focus.radius);
		this.highlight(focus);
	}
	highlight(focus: Focus | null): void {
		this.overlays.highlight(focus);
		this.requestRender();
	}

	/** Face under a client-space point, through the BVH; clipped-away hits are skipped. Null until the picking tree is there. */
	pick(clientX: number, clientY: number): PickResult | null {
		const ndc = this.toNdc(clientX, clientY);
		return ndc ? this.mesh.pick(ndc, this.rig.camera, this.sectionOn ? this.section : null) : null;
	}
	/** Comment pin within 14 px of a client-space point. */
	pickPin(clientX: number, clientY: number): string | null {
		return this.pins.pick(this.rig.camera, this.host.renderer.domElement.getBoundingClientRect(), clientX, clientY, this.compare.sideBySide ? 0.5 : 1);
	}
	private toNdc(clientX: number, clientY: number): Vector2 | null {
		const rect = this.host.renderer.domElement.getBoundingClientRect();
		const w = this.compare.sideBySide ? rect.width / 2 : rect.width;
		const x = clientX - rect.left, y = clientY - rect.top;
		if (x > w) return null;
		return new Vector2((x / w) * 2 - 1, -(y / rect.height) * 2 + 1);
	}

	requestRender(): void {
		this.host.requestRender();
	}
	/** One frame now; its duration in ms (with finish = true waited for on the GPU). */
	renderNow(finish = false): number {
		return this.host.renderNow(finish);
	}

	/** What one frame draws; the host times it. */
	private draw(finish: boolean): void {
		const r = this.host.renderer;
		const t0 = performance.now();
		if (this.rig.step()) this.requestRender();
		const moving = this.rig.moving;
		const coarse = moving && this.mesh.hasProxy;
		this.mesh.setCoarse(coarse);
		this.overlays.setMoving(moving);
		// Software rasterisers pay per pixel: while a large mesh moves, fewer pixels, sharp again at rest.
		this.host.setResolution(coarse ? MOVING_RESOLUTION : 1);
		const { x: w, y: h } = this.host.size();
		r.setScissorTest(false);
		r.setViewport(0, 0, w, h);
		r.clear();
		r.setScissorTest(true);
		const cam = this.rig.camera;
		if (this.compare.sideBySide) {
			const half = Math.floor(w / 2);
			this.rig.setAspect(half / h);
			r.setViewport(0, 0, half, h);
			r.setScissor(0, 0, half, h);
			r.render(this.scene, cam);
			// Same camera on both halves: the views stay linked.
			r.setViewport(half, 0, w - half, h);
			r.setScissor(half, 0, w - half, h);
			r.render(this.compare.scene, cam);
		} else {
			this.rig.setAspect(w / h);
			r.setViewport(0, 0, w, h);
			r.setScissor(0, 0, w, h);
			r.render(this.scene, cam);
		}
		// Axis inset, bottom left: rotates with the main camera.
		this.inset.render(r, cam, this.rig.controls.target);
		r.setScissorTest(false);
		if (!this.meshDrawn && this.mesh.visible) {
			if (this.measureFirstFrame && !finish) this.host.finish();
			this.meshDrawn = performance.now();
			this.firstFrameMs = this.meshDrawn - t0;
			for (const f of this.drawnWaiters.splice(0)) f();
		}
	}

	frameStats(): FrameStats {
		return this.host.frameStats();
	}
	/** GPU objects this viewer's renderer holds (for the leak checks in the dev harness tests). */
	gpuMemory(): GpuMemory {
		return this.host.gpuMemory();
	}
	cameraPosition(): [number, number, number] {
		return this.rig.position();
	}
	cameraTarget(): [number, number, number] {
		return this.rig.target();
	}
	get animating(): boolean {
		return this.rig.animating;
	}
	/** The scene drawn in the main view (the dev harness's per-object figures draw parts of it alone). */
	get mainScene(): Scene {
		return this.scene;
	}

	/** Frees every layer; returns the GPU objects the renderer still held just before it was disposed (0 and 0 when nothing leaked). */
	dispose(): GpuMemory {
		this.rig.dispose();
		this.overlays.dispose();
		this.pins.dispose();
		this.compare.dispose();
		this.mesh.dispose();
		this.inset.dispose();
		const left = this.host.gpuMemory();
		this.host.dispose();
		return left;
	}
}
