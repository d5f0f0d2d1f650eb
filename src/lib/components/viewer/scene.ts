/**
 * The viewer's three.js scene: mesh, defect overlays, section plane, compare modes, BVH picking and
 * animated camera moves; the axis inset with the flow arrow and the comment pins are layers of
 * their own (layers/). Renders on demand (camera moves, toggles), never in an idle loop, so a large
 * mesh costs nothing while nobody touches it.
 */
import {
	AmbientLight,
	BufferAttribute,
	BufferGeometry,
	CanvasTexture,
	Color,
	DirectionalLight,
	DoubleSide,
	Float32BufferAttribute,
	Group,
	LineBasicMaterial,
	LineSegments,
	Mesh,
	MeshBasicMaterial,
	MeshLambertMaterial,
	Plane,
	PerspectiveCamera,
	Points,
	PointsMaterial,
	Raycaster,
	Scene,
	ShaderMaterial,
	Sphere,
	Vector2,
	Triangle,
	Vector3,
	WebGLRenderer,
	type Material,
	type Object3D,
	type Texture
} from 'three';
import { OrbitControls } from 'three/examples/jsm/controls/OrbitControls.js';
import { acceleratedRaycast, computeBoundsTree, disposeBoundsTree, MeshBVH } from 'three-mesh-bvh';
import type { MeshOverlays } from '$lib/mesh/overlays';
import type { BvhData } from './protocol';
import { AxisInset } from './layers/axis-inset';
import { thickLines } from './layers/thick-lines';
import { PinLayer, type PinInput } from './layers/pin-layer';

export type { PinInput };
import { faceIndex, type OverlayDraw } from './overlay-draw';
import { BACKGROUND_COLOUR, drawMarker, hexRgb, KIND_ORDER, KIND_STYLE, MESH_COLOUR, rampColour, SHELL_COLOURS, type MarkerShape, type OverlayKind } from './palette';

export type ViewName = '+x' | '-x' | '+y' | '-y' | '+z' | '-z';
export type SectionAxis = 'x' | 'y' | 'z';
export type CompareMode = 'side' | 'overlay' | 'deviation';
/** wall, gap: thickness or gap width in target cells (cellField). */
export type ColourMode = 'plain' | 'shells' | 'deviation' | 'wall' | 'gap';

export interface PickResult {
	point: [number, number, number];
	face: number;
	shell: number;
	/** Deviation at the point (interpolated from the face's vertices) while the deviation colouring is shown. */
	deviation?: number;
	/** Wall thickness or gap width at the point, in cells, while that colouring is shown. */
	cells?: number;
}

/** What to emphasise: a point with a radius to frame, optional segments and faces. */
export interface Focus {
	center: [number, number, number];
	radius: number;
	segments?: Float32Array;
	faces?: Uint32Array;
}

BufferGeometry.prototype.computeBoundsTree = computeBoundsTree;
BufferGeometry.prototype.disposeBoundsTree = disposeBoundsTree;

const BACK_COLOUR_SCALE = 'vec3(0.62, 0.5, 0.42)';
const FLY_MS = 400;
/** Share of the resting resolution (per axis) moving frames of a large mesh are drawn at: a quarter of the pixels. */
const MOVING_RESOLUTION = 0.5;

const PATTERN_VERTEX = /* glsl */ `
#include <common>
#include <clipping_planes_pars_vertex>
void main() {
	#include <begin_vertex>
	#include <project_vertex>
	#include <clipping_planes_vertex>
}`;
// Screen-space patterns so they keep their size at any zoom: 0 checker, 1 diagonal hatch, 2 flat tint.
const PATTERN_FRAGMENT = /* glsl */ `
uniform vec3 color;
uniform float opacity;
uniform int pattern;
uniform float cell;
#include <clipping_planes_pars_fragment>
void main() {
	#include <clipping_planes_fragment>
	float a = opacity;
	if (pattern == 0) {
		vec2 c = floor(gl_FragCoord.xy / cell);
		a = mod(c.x + c.y, 2.0) < 1.0 ? opacity : opacity * 0.25;
	} else if (pattern == 1) {
		a = mod(gl_FragCoord.x + gl_FragCoord.y, cell) < cell * 0.45 ? opacity : 0.0;
		if (a == 0.0) discard;
	}
	gl_FragColor = vec4(color, a);
}`;

function patternMaterial(colour: string, pattern: 0 | 1 | 2, opacity: number, cell: number): ShaderMaterial {
	return new ShaderMaterial({
		uniforms: { color: { value: new Color(colour) }, opacity: { value: opacity }, pattern: { value: pattern }, cell: { value: cell } },
		vertexShader: PATTERN_VERTEX,
		fragmentShader: PATTERN_FRAGMENT,
		transparent: true,
		depthWrite: false,
		side: DoubleSide,
		clipping: true,
		polygonOffset: true,
		polygonOffsetFactor: -2,
		polygonOffsetUnits: -4
	});
}

function meshMaterial(): MeshLambertMaterial {
	const mat = new MeshLambertMaterial({ color: MESH_COLOUR, flatShading: true, side: DoubleSide, polygonOffset: true, polygonOffsetFactor: 1, polygonOffsetUnits: 1 });
	mat.onBeforeCompile = (shader) => {
		// Back faces (seen through holes, cuts or flipped faces) in a warm dark tone.
		shader.fragmentShader = shader.fragmentShader.replace('#include <opaque_fragment>', `if (!gl_FrontFacing) outgoingLight *= ${BACK_COLOUR_SCALE};\n#include <opaque_fragment>`);
	};
	return mat;
}

/** Marker textures, one set per viewer: disposing one viewer never takes another's textures. */
class MarkerTextures {
	private cache = new Map<MarkerShape, Texture>();
	get(shape: MarkerShape): Texture {
		let tex = this.cache.get(shape);
		if (tex) return tex;
		const canvas = document.createElement('canvas');
		canvas.width = canvas.height = 64;
		drawMarker(canvas.getContext('2d')!, shape, 64);
		tex = new CanvasTexture(canvas);
		this.cache.set(shape, tex);
		return tex;
	}
	dispose(): void {
		for (const t of this.cache.values()) t.dispose();
		this.cache.clear();
	}
}

function lineObject(segments: Float32Array, colour: string, width: number, dashed: boolean, dash = 1): Mesh {
	return thickLines(segments, colour, width, dashed ? dash : 0);
}

/** 1-pixel GL lines: two vertices a segment and the simplest shader, for segments past the thick-line cap. */
function thinLines(segments: Float32Array, colour: string): LineSegments {
	const geom = new BufferGeometry();
	geom.setAttribute('position', new BufferAttribute(segments, 3));
	const line = new LineSegments(geom, new LineBasicMaterial({ color: new Color(colour) }));
	line.raycast = () => {};
	return line;
}

/**
 * Markers drawn twice from one geometry: solid where in front of the surface, ghosted (a quarter
 * opacity) where hidden behind it, so items on the far side stay findable without looking near.
 */
function markerPoints(textures: MarkerTextures, points: Float32Array, shape: MarkerShape, colour: string, size: number): Group {
	const geom = new BufferGeometry();
	geom.setAttribute('position', new BufferAttribute(points, 3));
	const front = new Points(geom, new PointsMaterial({ map: textures.get(shape), color: new Color(colour), size, sizeAttenuation: false, transparent: true, alphaTest: 0.2, depthTest: true, depthWrite: false }));
	const ghost = new Points(geom, new PointsMaterial({ map: textures.get(shape), color: new Color(colour), size, sizeAttenuation: false, transparent: true, opacity: 0.22, depthTest: false, depthWrite: false }));
	ghost.renderOrder = 9;
	front.renderOrder = 10;
	const g = new Group();
	g.add(ghost, front);
	return g;
}

/** GPU objects one renderer holds (renderer.info.memory). */
export interface GpuMemory {
	geometries: number;
	textures: number;
}

/** Handle the dev harness installs for tests and the viewer bench. */
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
	benchmark(frames?: number, moving?: boolean): FrameStats;
	profileMoving(frames?: number): Record<string, number>;
	render(): number;
}

/** Frame-time statistics in milliseconds over the last renders. */
export interface FrameStats {
	frames: number;
	lastMs: number;
	meanMs: number;
	p95Ms: number;
	maxMs: number;
}

export class ViewerScene {
	readonly renderer: WebGLRenderer;
	readonly camera: PerspectiveCamera;
	readonly controls: OrbitControls;
	private scene = new Scene();
	private compareScene = new Scene();
	private inset: AxisInset;
	private container: HTMLElement;
	private mesh: Mesh | null = null;
	/** Coarse stand-in shown instead of the mesh while the camera moves. */
	private proxy: Mesh | null = null;
	private moving = false;
	/** When the mesh's shaders were ready and its first frame asked for (performance.now), for the debug hook. */
	meshShown = 0;
	/** When the first frame with the mesh in it was finished (performance.now); waited for on the GPU when measureFirstFrame is set (the dev harness). */
	meshDrawn = 0;
	measureFirstFrame = false;
	private wire: Mesh | null = null;
	private compareMesh: Mesh | null = null;
	private overlayGroups = new Map<OverlayKind, Group>();
	/** Line overlays with a sampled stand-in: the stand-in is drawn while the camera moves. */
	private lod: { fine: Object3D; coarse: Object3D }[] = [];
	private highlightGroup = new Group();
	private pinLayer = new PinLayer();
	private faceShell: Int32Array | null = null;
	private triCount = 0;
	private bounds = new Sphere(new Vector3(), 1);
	private bboxMin = new Vector3();
	private bboxMax = new Vector3();
	private section = new Plane(new Vector3(-1, 0, 0), 0);
	private sectionOn = false;
	private sectionAxis: SectionAxis = 'x';
	private sectionT = 0.5;
	private raycaster = new Raycaster();
	private frameTimes: number[] = [];
	private pending = false;
	private disposed = false;
	/** Overlays drawn as a sample: items drawn and items in the finding. */
	sampled: Partial<Record<OverlayKind, { drawn: number; total: number }>> = {};
	private markerTextures = new MarkerTextures();
	private anim: { from: Vector3; to: Vector3; fromT: Vector3; toT: Vector3; t0: number } | null = null;
	private resizeObserver: ResizeObserver;
	/** Pixel ratio at rest; moving frames of a large mesh are drawn at MOVING_RESOLUTION of it and scaled up by the browser. */
	private restRatio = 1;
	private compareMode: CompareMode | null = null;
	private colourMode: ColourMode = 'plain';
	private deviation: { distances: Float32Array; max: number } | null = null;
	/** Per-vertex wall and gap in cells, and the top of the colour scale (cells). */
	private cellField: { wall: Float32Array; gap: Float32Array; scaleCells: number } | null = null;
	private shellColours: Float32Array | null = null;
	private visible: Record<OverlayKind, boolean> = Object.fromEntries(KIND_ORDER.map((k) => [k, true])) as Record<OverlayKind, boolean>;

	constructor(container: HTMLElement, flowDirection: [number, number, number]) {
		this.container = container;
		this.renderer = new WebGLRenderer({ antialias: false, preserveDrawingBuffer: true, powerPreference: 'high-performance' });
		this.restRatio = Math.min(window.devicePixelRatio, 2);
		this.renderer.setPixelRatio(this.restRatio);
		this.renderer.setClearColor(new Color(BACKGROUND_COLOUR));
		this.renderer.localClippingEnabled = false;
		this.renderer.autoClear = false;
		container.appendChild(this.renderer.domElement);
		this.renderer.domElement.style.display = 'block';
		this.camera = new PerspectiveCamera(40, 1, 0.01, 1000);
		// Z up, the usual convention for hull and tow-body drawings.
		this.camera.up.set(0, 0, 1);
		this.camera.position.set(3, -4, 2.5);
		this.controls = new OrbitControls(this.camera, this.renderer.domElement);
		this.controls.enableDamping = false;
		this.controls.addEventListener('change', () => this.requestRender());
		this.controls.addEventListener('start', () => (this.moving = true));
		this.controls.addEventListener('end', () => {
			this.moving = false;
			this.requestRender();
		});
		for (const s of [this.scene, this.compareScene]) {
			s.add(new AmbientLight(0xffffff, 0.55));
			const key = new DirectionalLight(0xffffff, 1.6);
			key.position.set(1, -1.4, 2);
			s.add(key);
			const fill = new DirectionalLight(0xffffff, 0.5);
			fill.position.set(-1.5, 1, -0.6);
			s.add(fill);
		}
		this.scene.add(this.highlightGroup, this.pinLayer.group);
		this.inset = new AxisInset(flowDirection);
		this.resizeObserver = new ResizeObserver(() => this.resize());
		this.resizeObserver.observe(container);
		this.resize();
	}

	setFlowDirection(flow: [number, number, number]): void {
		this.inset.setFlowDirection(flow);
		this.requestRender();
	}

	private resize(): void {
		const w = Math.max(1, this.container.clientWidth), h = Math.max(1, this.container.clientHeight);
		this.renderer.setSize(w, h);
		this.camera.aspect = this.viewAspect();
		this.camera.updateProjectionMatrix();
		this.requestRender();
	}

	/** Aspect of one view: half the canvas when two revisions stand side by side. */
	private viewAspect(): number {
		const w = Math.max(1, this.container.clientWidth), h = Math.max(1, this.container.clientHeight);
		return (this.compareMode === 'side' && this.compareMesh ? w / 2 : w) / h;
	}

	/**
	 * A large binary STL's triangles as the file holds them (unwelded, 9 floats each), drawn until
	 * setMesh brings the welded mesh: the first frame does not wait for the reader.
	 */
	setPreview(positions: Float32Array): void {
		this.clearMesh();
		const geom = new BufferGeometry();
		geom.setAttribute('position', new BufferAttribute(positions, 3));
		this.showMesh(geom, positions.length / 9);
	}

	/** The welded mesh; it takes the preview's place without a new shader or a new camera. bvh null: picking waits for setBvh. */
	setMesh(positions: Float32Array, indices: Uint32Array, bvh: BvhData | null): void {
		const geom = new BufferGeometry();
		geom.setAttribute('position', new BufferAttribute(positions, 3));
		geom.setIndex(new BufferAttribute(indices, 1));
		if (this.mesh && !this.mesh.geometry.getIndex()) {
			// Swap the preview's geometry: same material, already compiled, already framed.
			const old = this.mesh.geometry;
			geom.boundingBox = old.boundingBox;
			geom.boundingSphere = old.boundingSphere;
			this.mesh.geometry = geom;
			if (this.wire) this.wire.geometry = geom;
			old.dispose();
			this.triCount = indices.length / 3;
			this.shellColours = null;
			this.applyColours();
		} else {
			this.clearMesh();
			this.showMesh(geom, indices.length / 3);
		}
		if (bvh) this.setBvh(bvh);
	}

	get pickReady(): boolean {
		return !!this.mesh?.geometry.boundsTree;
	}

	/** The picking tree (three-mesh-bvh, indirect); until it arrives pick() finds nothing. */
	setBvh(bvh: BvhData): void {
		const geom = this.mesh?.geometry;
		if (!geom || !geom.getIndex()) return;
		geom.boundsTree = MeshBVH.deserialize(bvh as never, geom, { setIndex: false });
	}

	/** Coarse stand-in drawn instead of the mesh while the camera moves. */
	setProxy(positions: Float32Array, indices: Uint32Array): void {
		this.clearProxy();
		const pg = new BufferGeometry();
		pg.setAttribute('position', new BufferAttribute(positions, 3));
		pg.setIndex(new BufferAttribute(indices, 1));
		this.proxy = new Mesh(pg, meshMaterial());
		this.proxy.visible = false;
		this.proxy.raycast = () => {};
		this.scene.add(this.proxy);
	}

	private showMesh(geom: BufferGeometry, triangles: number): void {
		geom.computeBoundingBox();
		geom.computeBoundingSphere();
		this.mesh = new Mesh(geom, meshMaterial());
		this.mesh.raycast = acceleratedRaycast;
		// Compile the shaders without blocking (KHR_parallel_shader_compile where available): a
		// synchronous link on software WebGL holds the page for seconds.
		const mesh = this.mesh;
		mesh.visible = false;
		this.scene.add(mesh);
		this.renderer
			.compileAsync(mesh, this.camera, this.scene)
			.catch(() => {})
			.then(() => {
				if (this.mesh !== mesh) return;
				mesh.visible = true;
				this.meshShown = performance.now();
				this.requestRender();
			});
		this.triCount = triangles;
		this.bboxMin.copy(geom.boundingBox!.min);
		this.bboxMax.copy(geom.boundingBox!.max);
		this.bounds.copy(geom.boundingSphere!);
		this.camera.near = this.bounds.radius / 200;
		this.camera.far = this.bounds.radius * 200;
		this.camera.updateProjectionMatrix();
		this.updateSection();
		this.fit(false);
	}

	/** Bounding-box diagonal of the loaded mesh, model units. */
	get diagonal(): number {
		return this.bboxMax.distanceTo(this.bboxMin);
	}

	get loadedTriangles(): number {
		return this.triCount;
	}

	private clearMesh(): void {
		for (const m of [this.mesh, this.wire]) {
			if (!m) continue;
			this.scene.remove(m);
			(m.material as Material).dispose();
		}
		if (this.mesh) {
			this.mesh.geometry.disposeBoundsTree?.();
			this.mesh.geometry.dispose();
		}
		this.clearProxy();
		this.mesh = this.wire = null;
		this.shellColours = null;
		this.meshShown = this.meshDrawn = 0;
	}

	private clearProxy(): void {
		if (!this.proxy) return;
		this.scene.remove(this.proxy);
		this.proxy.geometry.dispose();
		(this.proxy.material as Material).dispose();
		this.proxy = null;
	}

	/** Draws the overlays from buffers the parse worker finished (overlay-draw.ts): no per-item work here. */
	setOverlays(o: MeshOverlays, d: OverlayDraw): void {
		for (const g of this.overlayGroups.values()) this.disposeGroup(g);
		this.overlayGroups.clear();
		this.lod = [];
		this.sampled = { ...d.sampled };
		this.faceShell = o.faceShell;
		if (!this.mesh) return;
		const diag = this.bboxMax.distanceTo(this.bboxMin) || 1;
		const dash = diag / 120;
		const add = (kind: OverlayKind, ...objs: Object3D[]) => {
			const g = new Group();
			g.add(...objs);
			g.visible = this.visible[kind];
			this.overlayGroups.set(kind, g);
			this.scene.add(g);
		};
		const st = KIND_STYLE;
		const tex = this.markerTextures;
		// Level of detail for large overlays. At rest: every segment, the first THICK_SEGMENT_CAP (an
		// even sample) thick and the rest as 1-pixel lines; while the camera moves: a thick sample of
		// MOVING_SEGMENT_CAP segments and MOVING_MARKER_CAP markers only (overlay-draw.ts).
		const lod = (fine: Object3D, moving: Object3D | null): Object3D[] => {
			if (!moving) return [fine];
			moving.visible = false;
			this.lod.push({ fine, coarse: moving });
			return [fine, moving];
		};
		const lines = (full: Float32Array, thick: Float32Array, moving: Float32Array, colour: string, make: (segments: Float32Array) => Object3D): Object3D[] => {
			let fine: Object3D;
			if (thick.length) {
				fine = new Group();
				fine.add(thinLines(full, colour), make(thick));
			} else fine = make(full);
			return lod(fine, moving.length ? make(moving) : null);
		};
		const markers = (all: Float32Array, moving: Float32Array, shape: MarkerShape, colour: string, size: number): Object3D[] =>
			lod(markerPoints(tex, all, shape, colour, size), moving.length ? markerPoints(tex, moving, shape, colour, size) : null);
		const none = new Float32Array(0);
		if (o.holeSegments.length) add('holes', ...lines(o.holeSegments, none, d.holeSegmentsMoving, st.holes.colour, (seg) => lineObject(seg, st.holes.colour, 4.5, true, dash)), markerPoints(tex, d.holeCentres, st.holes.marker, st.holes.colour, 26));
		if (o.nonManifoldEdgeSegments.length) {
			const cased = (seg: Float32Array) => {
				const g = new Group();
				const inner = lineObject(seg, BACKGROUND_COLOUR, 2.2, false);
				inner.renderOrder = 1;
				g.add(lineObject(seg, st.nonManifoldEdges.colour, 7, false), inner);
				return g;
			};
			add(
				'nonManifoldEdges',
				...lines(o.nonManifoldEdgeSegments, d.nonManifoldEdgeSegmentsThick, d.nonManifoldEdgeSegmentsMoving, st.nonManifoldEdges.colour, cased),
				...markers(d.nonManifoldEdgeMidpoints, d.nonManifoldEdgeMidpointsMoving, st.nonManifoldEdges.marker, st.nonManifoldEdges.colour, 20)
			);
		}
		if (o.nonManifoldVertexPoints.length) add('nonManifoldVertices', markerPoints(tex, o.nonManifoldVertexPoints, st.nonManifoldVertices.marker, st.nonManifoldVertices.colour, 24));
		if (o.selfIntersectionPoints.length) {
			add(
				'selfIntersections',
				this.faceSubset(d.selfIntersectionIndex, patternMaterial(st.selfIntersections.colour, 1, 0.9, 7)),
				markerPoints(tex, o.selfIntersectionPoints, st.selfIntersections.marker, st.selfIntersections.colour, 22)
			);
		}
		if (o.shortEdgeSegments.length) {
			add(
				'shortEdges',
				...lines(o.shortEdgeSegments, d.shortEdgeSegmentsThick, d.shortEdgeSegmentsMoving, st.shortEdges.colour, (seg) => lineObject(seg, st.shortEdges.colour, 5, false)),
				...markers(d.shortEdgeMidpoints, d.shortEdgeMidpointsMoving, st.shortEdges.marker, st.shortEdges.colour, 12)
			);
		}
		if (o.degenerateFaces.length) add('degenerateFaces', ...markers(d.degenerateCentres, d.degenerateCentresMoving, st.degenerateFaces.marker, st.degenerateFaces.colour, 20));
		if (o.flippedFaces.length) add('flippedFaces', this.faceSubset(d.flippedIndex, patternMaterial(st.flippedFaces.colour, 0, 0.85, 6)));
		if (o.floatingShells.length) {
			add(
				'floatingShells',
				this.faceSubset(d.floatingIndex, patternMaterial(st.floatingShells.colour, 2, 0.35, 1)),
				lineObject(d.floatingBoxSegments, st.floatingShells.colour, 2.5, true, dash * 0.25),
				markerPoints(tex, d.floatingCentres, st.floatingShells.marker, st.floatingShells.colour, 26)
			);
		}
		if (this.colourMode === 'shells') this.applyColours();
		this.requestRender();
	}

	/** Centre and size of the listed faces, for flying to them. */
	faceFocus(faces: Uint32Array): Focus {
		const min = [Infinity, Infinity, Infinity], max = [-Infinity, -Infinity, -Infinity];
		const p = this.mesh!.geometry.getAttribute('position').array as Float32Array;
		const idx = this.mesh!.geometry.getIndex()!.array as Uint32Array;
		for (let i = 0; i < faces.length; i++) {
			for (let k = 0; k < 3; k++) {
				const v3 = 3 * idx[3 * faces[i] + k];
				for (let a = 0; a < 3; a++) {
					min[a] = Math.min(min[a], p[v3 + a]);
					max[a] = Math.max(max[a], p[v3 + a]);
				}
			}
		}
		const center: [number, number, number] = [0.5 * (min[0] + max[0]), 0.5 * (min[1] + max[1]), 0.5 * (min[2] + max[2])];
		return { center, radius: 0.5 * Math.hypot(max[0] - min[0], max[1] - min[1], max[2] - min[2]), faces };
	}

	/** A mesh of some faces of the loaded mesh, from an index buffer into its vertices. */
	private faceSubset(index: Uint32Array, mat: Material): Mesh {
		const geom = new BufferGeometry();
		// Shares the mesh's position attribute: one upload, no copy.
		geom.setAttribute('position', this.mesh!.geometry.getAttribute('position'));
		geom.setIndex(new BufferAttribute(index, 1));
		geom.userData.sharesPosition = true;
		const m = new Mesh(geom, mat);
		m.renderOrder = 2;
		m.raycast = () => {};
		return m;
	}

	/** Index buffer (3 per face) of the listed face ids of the loaded mesh. */
	faceIndexOf(faces: Uint32Array): Uint32Array {
		return faceIndex(this.mesh!.geometry.getIndex()!.array as Uint32Array, faces);
	}

	setOverlayVisible(kind: OverlayKind, on: boolean): void {
		this.visible[kind] = on;
		const g = this.overlayGroups.get(kind);
		if (g) g.visible = on;
		this.requestRender();
	}

	setWireframe(on: boolean): void {
		if (!this.mesh) return;
		if (on && !this.wire) {
			this.wire = new Mesh(this.mesh.geometry, new MeshBasicMaterial({ color: '#0c1117', wireframe: true, transparent: true, opacity: 0.45 }));
			this.wire.raycast = () => {};
			this.scene.add(this.wire);
		}
		if (this.wire) this.wire.visible = on;
		this.requestRender();
	}

	setColourMode(mode: ColourMode): void {
		this.colourMode = mode;
		this.applyColours();
	}

	private applyColours(): void {
		if (!this.mesh) return;
		const geom = this.mesh.geometry;
		const mat = this.mesh.material as MeshLambertMaterial;
		const vertCount = geom.getAttribute('position').count;
		let colours: Float32Array | null = null;
		if (this.colourMode === 'shells' && this.faceShell) {
			if (!this.shellColours) {
				const rgb = SHELL_COLOURS.map(hexRgb);
				const idx = geom.getIndex()!.array as Uint32Array;
				colours = new Float32Array(3 * vertCount).fill(0.55);
				for (let t = 0; t < this.triCount; t++) {
					const s = this.faceShell[t];
					if (s < 0) continue;
					const c = rgb[s % rgb.length];
					for (let k = 0; k < 3; k++) colours.set(c, 3 * idx[3 * t + k]);
				}
				this.shellColours = colours;
			}
			colours = this.shellColours;
		} else if (this.colourMode === 'deviation' && this.deviation && this.deviation.distances.length === vertCount) {
			colours = new Float32Array(3 * vertCount);
			const inv = this.deviation.max > 0 ? 1 / this.deviation.max : 0;
			for (let v = 0; v < vertCount; v++) rampColour(this.deviation.distances[v] * inv, colours, 3 * v);
		} else if ((this.colourMode === 'wall' || this.colourMode === 'gap') && this.cellField && this.cellField.wall.length === vertCount) {
			// Thin (dark end of the ramp) to wide enough (bright end) at scaleCells and above.
			const f = this.colourMode === 'wall' ? this.cellField.wall : this.cellField.gap;
			const inv = 1 / this.cellField.scaleCells;
			colours = new Float32Array(3 * vertCount);
			for (let v = 0; v < vertCount; v++) rampColour(f[v] * inv, colours, 3 * v);
		}
		if (colours) {
			geom.setAttribute('color', new Float32BufferAttribute(colours, 3));
			mat.vertexColors = true;
			mat.color.set('#ffffff');
		} else {
			geom.deleteAttribute('color');
			mat.vertexColors = false;
			mat.color.set(MESH_COLOUR);
		}
		mat.needsUpdate = true;
		this.requestRender();
	}

	setSection(on: boolean, axis: SectionAxis, t: number, flip = false): void {
		this.sectionOn = on;
		this.sectionAxis = axis;
		this.sectionT = t;
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
		this.renderer.clippingPlanes = this.sectionOn ? [this.section] : [];
		this.requestRender();
	}

	setCompare(positions: Float32Array | null, indices: Uint32Array | null, mode: CompareMode | null): void {
		if (this.compareMesh) {
			this.compareMesh.parent?.remove(this.compareMesh);
			this.compareMesh.geometry.dispose();
			(this.compareMesh.material as Material).dispose();
			this.compareMesh = null;
		}
		if (positions && indices) {
			const geom = new BufferGeometry();
			geom.setAttribute('position', new BufferAttribute(positions, 3));
			geom.setIndex(new BufferAttribute(indices, 1));
			this.compareMesh = new Mesh(geom, new MeshLambertMaterial({ color: '#c9b38f', flatShading: true, side: DoubleSide, transparent: false, opacity: 1 }));
			this.compareMesh.raycast = () => {};
		}
		this.setCompareMode(mode);
	}

	setCompareMode(mode: CompareMode | null): void {
		const wasSide = this.compareMode === 'side';
		this.compareMode = this.compareMesh ? mode : null;
		// The view width halves or doubles: frame the part again.
		if (wasSide !== (this.compareMode === 'side') && this.mesh) this.fit();
		if (this.compareMesh) {
			this.compareMesh.parent?.remove(this.compareMesh);
			const mat = this.compareMesh.material as MeshLambertMaterial;
			if (mode === 'side') {
				this.compareScene.add(this.compareMesh);
				mat.transparent = false;
				mat.opacity = 1;
				mat.depthWrite = true;
			} else if (mode === 'overlay') {
				this.scene.add(this.compareMesh);
				mat.transparent = true;
				mat.opacity = 0.45;
				mat.depthWrite = false;
			}
			mat.needsUpdate = true;
		}
		if (mode === 'deviation' && this.deviation) this.setColourMode('deviation');
		else if (this.colourMode === 'deviation') this.setColourMode('plain');
		this.requestRender();
	}

	/** Wall and gap per vertex in cells; scaleCells is the value drawn at the bright end of the ramp. */
	setCellField(field: { wall: Float32Array; gap: Float32Array; scaleCells: number } | null): void {
		this.cellField = field;
		if (this.colourMode === 'wall' || this.colourMode === 'gap') this.applyColours();
	}

	/** Positions and indices of the loaded mesh: the live arrays behind the GPU buffers; callers copy before transferring. */
	meshBuffers(): { positions: Float32Array; indices: Uint32Array } | null {
		if (!this.mesh) return null;
		const g = this.mesh.geometry;
		return { positions: g.getAttribute('position').array as Float32Array, indices: g.getIndex()!.array as Uint32Array };
	}

	setDeviation(distances: Float32Array | null, max: number): void {
		this.deviation = distances ? { distances, max } : null;
		if (this.compareMode === 'deviation') this.setColourMode(distances ? 'deviation' : 'plain');
	}

	/** Positions of the loaded mesh: the live array behind the GPU buffer, not a copy; callers copy before transferring. */
	meshPositions(): Float32Array | null {
		return this.mesh ? (this.mesh.geometry.getAttribute('position').array as Float32Array) : null;
	}
	compareBuffers(): { positions: Float32Array; indices: Uint32Array } | null {
		if (!this.compareMesh) return null;
		return { positions: this.compareMesh.geometry.getAttribute('position').array as Float32Array, indices: this.compareMesh.geometry.getIndex()!.array as Uint32Array };
	}

	setPins(pins: PinInput[]): void {
		this.pinLayer.setPins(pins);
		this.requestRender();
	}

	/** Distance at which the bounding box fills about 85 % of the view from direction dir. */
	private fitDistance(dir: Vector3): number {
		const half = Math.tan((this.camera.fov * Math.PI) / 360);
		const aspect = Math.max(0.3, this.viewAspect());
		const right = new Vector3().crossVectors(dir, this.camera.up);
		if (right.lengthSq() < 1e-9) right.set(1, 0, 0);
		right.normalize();
		const up = new Vector3().crossVectors(right, dir).normalize();
		let need = 0;
		const c = this.bounds.center;
		for (let i = 0; i < 8; i++) {
			const p = new Vector3(i & 1 ? this.bboxMax.x : this.bboxMin.x, i & 2 ? this.bboxMax.y : this.bboxMin.y, i & 4 ? this.bboxMax.z : this.bboxMin.z).sub(c);
			const depth = p.dot(dir);
			// Corner must fit both horizontally and vertically at distance d − depth.
			need = Math.max(need, Math.abs(p.dot(up)) / (half * 0.85) + depth, Math.abs(p.dot(right)) / (half * aspect * 0.85) + depth);
		}
		return Math.max(need, this.bounds.radius * 0.5);
	}

	fit(animate = true): void {
		const dir = this.camera.position.clone().sub(this.controls.target);
		if (dir.lengthSq() === 0) dir.set(1, -1, 1);
		dir.normalize();
		this.moveTo(this.bounds.center.clone().addScaledVector(dir, this.fitDistance(dir)), this.bounds.center.clone(), animate);
	}

	view(name: ViewName, animate = true): void {
		const dir = new Vector3();
		const a = name[1] === 'x' ? 0 : name[1] === 'y' ? 1 : 2;
		dir.setComponent(a, name[0] === '+' ? 1 : -1);
		// Looking straight along z with z up is singular for the orbit controls: tilt a hair towards −y.
		if (a === 2) dir.y = -1e-3;
		dir.normalize();
		this.moveTo(this.bounds.center.clone().addScaledVector(dir, this.fitDistance(dir)), this.bounds.center.clone(), animate);
	}

	/** Fly to frame a sphere (centre, radius), keeping the current viewing direction. */
	flyTo(focus: Focus): void {
		const r = Math.max(focus.radius, this.bounds.radius * 0.06);
		const dist = (r / Math.sin((this.camera.fov * Math.PI) / 360)) * 1.8;
		const target = new Vector3(...focus.center);
		// Look from outside: mostly along the ray from the part's centre through the item, a little
		// of the current direction so the move stays readable.
		const current = this.camera.position.clone().sub(this.controls.target).normalize();
		const radial = target.clone().sub(this.bounds.center);
		const dir = radial.lengthSq() > (0.05 * this.bounds.radius) ** 2 ? radial.normalize().addScaledVector(current, 0.35).normalize() : current;
		this.moveTo(target.clone().addScaledVector(dir, dist), target, true);
		this.highlight(focus);
	}

	highlight(focus: Focus | null): void {
		this.disposeGroup(this.highlightGroup, false);
		if (focus) {
			if (focus.segments && focus.segments.length) this.highlightGroup.add(lineObject(focus.segments, '#ffffff', 3, false));
			if (focus.faces && focus.faces.length) this.highlightGroup.add(this.faceSubset(this.faceIndexOf(focus.faces), patternMaterial('#ffffff', 2, 0.55, 1)));
			const pt = markerPoints(this.markerTextures, Float32Array.from(focus.center), 'reticle', '#ffffff', 44);
			pt.children.forEach((c) => (c.renderOrder += 6));
			this.highlightGroup.add(pt);
		}
		this.requestRender();
	}

	private moveTo(pos: Vector3, target: Vector3, animate: boolean): void {
		if (!animate) {
			this.camera.position.copy(pos);
			this.controls.target.copy(target);
			this.controls.update();
			this.requestRender();
			return;
		}
		this.anim = { from: this.camera.position.clone(), to: pos, fromT: this.controls.target.clone(), toT: target, t0: performance.now() };
		this.requestRender();
	}

	/** Face under a client-space point, through the BVH; clipped-away hits are skipped. */
	pick(clientX: number, clientY: number): PickResult | null {
		if (!this.mesh?.geometry.boundsTree) return null;
		const rect = this.renderer.domElement.getBoundingClientRect();
		const ndc = this.toNdc(clientX, clientY, rect);
		if (!ndc) return null;
		this.raycaster.setFromCamera(ndc, this.camera);
		(this.raycaster as Raycaster & { firstHitOnly?: boolean }).firstHitOnly = !this.sectionOn;
		const hits = this.raycaster.intersectObject(this.mesh, false);
		for (const h of hits) {
			if (this.sectionOn && this.section.distanceToPoint(h.point) < 0) continue;
			const face = h.faceIndex ?? -1;
			const hit: PickResult = { point: [h.point.x, h.point.y, h.point.z], face, shell: this.faceShell && face >= 0 ? this.faceShell[face] : -1 };
			if (this.colourMode === 'deviation' && this.deviation && h.face) hit.deviation = this.fieldAt(this.deviation.distances, h.point, h.face.a, h.face.b, h.face.c);
			if ((this.colourMode === 'wall' || this.colourMode === 'gap') && this.cellField && h.face) {
				hit.cells = this.fieldAt(this.colourMode === 'wall' ? this.cellField.wall : this.cellField.gap, h.point, h.face.a, h.face.b, h.face.c);
			}
			return hit;
		}
		return null;
	}

	/** A per-vertex field at a point of face a, b, c (barycentric). */
	private fieldAt(d: Float32Array, p: Vector3, a: number, b: number, c: number): number {
		const pos = this.mesh!.geometry.getAttribute('position');
		const va = new Vector3().fromBufferAttribute(pos, a), vb = new Vector3().fromBufferAttribute(pos, b), vc = new Vector3().fromBufferAttribute(pos, c);
		const w = Triangle.getBarycoord(p, va, vb, vc, new Vector3());
		if (!w) return (d[a] + d[b] + d[c]) / 3;
		return w.x * d[a] + w.y * d[b] + w.z * d[c];
	}

	/** Lowest and highest coordinate of the loaded mesh along an axis, in model units. */
	sectionRange(axis: SectionAxis): [number, number] {
		const a = axis === 'x' ? 0 : axis === 'y' ? 1 : 2;
		return [this.bboxMin.getComponent(a), this.bboxMax.getComponent(a)];
	}

	/** Comment pin within 14 px of a client-space point. */
	pickPin(clientX: number, clientY: number): string | null {
		return this.pinLayer.pick(this.camera, this.renderer.domElement.getBoundingClientRect(), clientX, clientY, this.compareMode === 'side' ? 0.5 : 1);
	}

	private toNdc(clientX: number, clientY: number, rect: DOMRect): Vector2 | null {
		const w = this.compareMode === 'side' ? rect.width / 2 : rect.width;
		const x = clientX - rect.left, y = clientY - rect.top;
		if (x > w) return null;
		return new Vector2((x / w) * 2 - 1, -(y / rect.height) * 2 + 1);
	}

	requestRender(): void {
		if (this.pending || this.disposed) return;
		this.pending = true;
		requestAnimationFrame(() => {
			this.pending = false;
			if (this.disposed) return;
			if (this.anim) {
				const k = Math.min(1, (performance.now() - this.anim.t0) / FLY_MS);
				const e = k < 0.5 ? 2 * k * k : 1 - (-2 * k + 2) ** 2 / 2; // ease in-out (quadratic)
				this.camera.position.lerpVectors(this.anim.from, this.anim.to, e);
				this.controls.target.lerpVectors(this.anim.fromT, this.anim.toT, e);
				this.controls.update();
				if (k >= 1) this.anim = null;
				else this.requestRender();
			}
			this.renderNow();
		});
	}

	/** One frame; returns its duration (CPU side; with finish = true also waits for the GPU). */
	renderNow(finish = false): number {
		const t0 = performance.now();
		const r = this.renderer;
		const coarse = !!this.proxy && (this.moving || this.anim !== null);
		if (this.proxy && this.mesh && this.meshShown) {
			this.proxy.visible = coarse;
			this.mesh.visible = !coarse;
			// Colour modes are per vertex of the full mesh; the stand-in shows plain while moving.
		}
		const movingNow = this.moving || this.anim !== null;
		// Software rasterisers pay per pixel: while a large mesh moves, fewer pixels, sharp again at rest.
		const ratio = this.proxy && movingNow ? this.restRatio * MOVING_RESOLUTION : this.restRatio;
		if (r.getPixelRatio() !== ratio) r.setPixelRatio(ratio);
		for (const l of this.lod) {
			l.fine.visible = !movingNow;
			l.coarse.visible = movingNow;
		}
		const size = r.getSize(new Vector2());
		const w = size.x, h = size.y;
		r.setScissorTest(false);
		r.setViewport(0, 0, w, h);
		r.clear();
		r.setScissorTest(true);
		if (this.compareMode === 'side' && this.compareMesh) {
			const half = Math.floor(w / 2);
			this.camera.aspect = half / h;
			this.camera.updateProjectionMatrix();
			r.setViewport(0, 0, half, h);
			r.setScissor(0, 0, half, h);
			r.render(this.scene, this.camera);
			// Same camera on both halves: the views stay linked.
			r.setViewport(half, 0, w - half, h);
			r.setScissor(half, 0, w - half, h);
			r.render(this.compareScene, this.camera);
		} else {
			this.camera.aspect = w / h;
			this.camera.updateProjectionMatrix();
			r.setViewport(0, 0, w, h);
			r.setScissor(0, 0, w, h);
			r.render(this.scene, this.camera);
		}
		// Axis inset, bottom left: rotates with the main camera.
		this.inset.render(r, this.camera, this.controls.target);
		r.setScissorTest(false);
		const firstWithMesh = !this.meshDrawn && !!this.mesh?.visible;
		if (finish || (firstWithMesh && this.measureFirstFrame)) {
			const gl = r.getContext();
			const px = new Uint8Array(4);
			gl.readPixels(0, 0, 1, 1, gl.RGBA, gl.UNSIGNED_BYTE, px);
		}
		const ms = performance.now() - t0;
		if (firstWithMesh) this.meshDrawn = performance.now();
		this.frameTimes.push(ms);
		if (this.frameTimes.length > 240) this.frameTimes.shift();
		return ms;
	}

	frameStats(): FrameStats {
		const f = this.frameTimes;
		if (!f.length) return { frames: 0, lastMs: 0, meanMs: 0, p95Ms: 0, maxMs: 0 };
		const sorted = [...f].sort((a, b) => a - b);
		return {
			frames: f.length,
			lastMs: f[f.length - 1],
			meanMs: f.reduce((a, b) => a + b, 0) / f.length,
			p95Ms: sorted[Math.min(sorted.length - 1, Math.floor(sorted.length * 0.95))],
			maxMs: sorted[sorted.length - 1]
		};
	}

	/** Orbit through `frames` renders, each waited for on the GPU; frame times in ms. */
	benchmark(frames: number, moving = false): FrameStats {
		this.moving = moving;
		// One frame first, outside the figures: it waits for whatever the GPU still had queued (a
		// toggle's redraw) and uploads what only moving frames draw.
		this.renderNow(true);
		this.frameTimes = [];
		const target = this.controls.target.clone();
		const offset = this.camera.position.clone().sub(target);
		const axis = this.camera.up.clone().normalize();
		for (let i = 0; i < frames; i++) {
			offset.applyAxisAngle(axis, (2 * Math.PI) / frames);
			this.camera.position.copy(target).add(offset);
			this.camera.lookAt(target);
			this.renderNow(true);
		}
		this.moving = false;
		const stats = this.frameStats();
		// The view at rest again, outside the figures: they are the orbit's frames only.
		this.requestRender();
		return stats;
	}

	/**
	 * Debug (the viewer bench): what each object drawn while the camera moves costs alone, in ms per
	 * frame waited for on the GPU, keyed "kind/child type items".
	 */
	profileMoving(frames = 5): Record<string, number> {
		const out: Record<string, number> = {};
		this.moving = true;
		this.renderNow(true);
		const r = this.renderer, gl = r.getContext(), px = new Uint8Array(4);
		const time = (label: string, obj: Object3D) => {
			const parent = obj.parent, tmp = new Scene(), wasVisible = obj.visible;
			obj.visible = true;
			tmp.add(obj);
			r.setScissorTest(false);
			r.clear();
			r.render(tmp, this.camera);
			gl.readPixels(0, 0, 1, 1, gl.RGBA, gl.UNSIGNED_BYTE, px);
			const t0 = performance.now();
			for (let f = 0; f < frames; f++) {
				r.clear();
				r.render(tmp, this.camera);
				gl.readPixels(0, 0, 1, 1, gl.RGBA, gl.UNSIGNED_BYTE, px);
			}
			out[label] = (performance.now() - t0) / frames;
			obj.visible = wasVisible;
			parent?.add(obj);
		};
		if (this.proxy) time(`stand-in ${this.proxy.geometry.getIndex()!.count / 3}`, this.proxy);
		for (const [kind, g] of this.overlayGroups) {
			if (!g.visible) continue;
			const leaves: Object3D[] = [];
			g.traverseVisible((o) => {
				if ((o as Mesh).isMesh || (o as Points).isPoints || (o as LineSegments).isLineSegments) leaves.push(o);
			});
			leaves.forEach((leaf, i) => {
				const geom = (leaf as Mesh).geometry as BufferGeometry & { instanceCount?: number };
				const n = geom.instanceCount && Number.isFinite(geom.instanceCount) ? geom.instanceCount : (geom.index?.count ?? geom.getAttribute('position')?.count ?? 0);
				time(`${kind}/${i} ${leaf.type} ${n}`, leaf);
			});
		}
		this.moving = false;
		this.requestRender();
		return out;
	}

	/** GPU objects this viewer's renderer holds (for the leak check in the dev harness tests). */
	gpuMemory(): GpuMemory {
		const m = this.renderer.info.memory;
		return { geometries: m.geometries, textures: m.textures };
	}

	cameraPosition(): [number, number, number] {
		return [this.camera.position.x, this.camera.position.y, this.camera.position.z];
	}
	cameraTarget(): [number, number, number] {
		return [this.controls.target.x, this.controls.target.y, this.controls.target.z];
	}
	get animating(): boolean {
		return this.anim !== null;
	}

	private disposeGroup(g: Group, removeFromScene = true): void {
		g.traverse((o) => {
			const m = o as Mesh;
			if (m.geometry && m.geometry !== this.mesh?.geometry) {
				// Face subsets share the mesh's position attribute: detach it first so disposing the
				// subset frees only its index, not the mesh's GPU buffer.
				if (m.geometry.userData.sharesPosition) m.geometry.deleteAttribute('position');
				m.geometry.dispose();
			}
			if (m.material) {
				const mat = m.material as Material & { map?: Texture | null };
				// Marker textures are cached per viewer; they are disposed with the scene.
				mat.dispose();
			}
		});
		g.clear();
		if (removeFromScene) g.parent?.remove(g);
	}

	/** Frees everything; returns the GPU objects the renderer still held just before it was disposed (0 and 0 when nothing leaked). */
	dispose(): GpuMemory {
		this.disposed = true;
		this.resizeObserver.disconnect();
		this.controls.dispose();
		for (const g of this.overlayGroups.values()) this.disposeGroup(g);
		this.disposeGroup(this.highlightGroup);
		this.pinLayer.dispose();
		this.setCompare(null, null, null);
		this.clearMesh();
		this.inset.dispose();
		this.markerTextures.dispose();
		const left = this.gpuMemory();
		this.renderer.dispose();
		this.renderer.forceContextLoss();
		this.renderer.domElement.remove();
		return left;
	}
}
