/**
 * The viewer's three.js scene: mesh, defect overlays, comment pins, section plane, axis inset with
 * the flow arrow, compare modes, BVH picking and animated camera moves. Renders on demand (camera
 * moves, toggles), never in an idle loop, so a large mesh costs nothing while nobody touches it.
 */
import {
	AmbientLight,
	ArrowHelper,
	BufferAttribute,
	BufferGeometry,
	CanvasTexture,
	Color,
	DirectionalLight,
	DoubleSide,
	Float32BufferAttribute,
	Group,
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
	Sprite,
	SpriteMaterial,
	Vector2,
	Triangle,
	Vector3,
	WebGLRenderer,
	type Material,
	type Object3D,
	type Texture
} from 'three';
import { OrbitControls } from 'three/examples/jsm/controls/OrbitControls.js';
import { LineSegments2 } from 'three/examples/jsm/lines/LineSegments2.js';
import { LineSegmentsGeometry } from 'three/examples/jsm/lines/LineSegmentsGeometry.js';
import { LineMaterial } from 'three/examples/jsm/lines/LineMaterial.js';
import { acceleratedRaycast, computeBoundsTree, disposeBoundsTree, MeshBVH } from 'three-mesh-bvh';
import type { MeshOverlays } from '$lib/mesh/overlays';
import type { BvhData } from './protocol';
import { BACKGROUND_COLOUR, drawMarker, hexRgb, KIND_ORDER, KIND_STYLE, MESH_COLOUR, rampColour, SHELL_COLOURS, type MarkerShape, type OverlayKind } from './palette';

export type ViewName = '+x' | '-x' | '+y' | '-y' | '+z' | '-z';
export type SectionAxis = 'x' | 'y' | 'z';
export type CompareMode = 'side' | 'overlay' | 'deviation';
export type ColourMode = 'plain' | 'shells' | 'deviation';

export interface PickResult {
	point: [number, number, number];
	face: number;
	shell: number;
	/** Deviation at the point (interpolated from the face's vertices) while the deviation colouring is shown. */
	deviation?: number;
}

export interface PinInput {
	id: string;
	point: [number, number, number];
	number: number;
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
const INSET_PX = 132;

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

function textSprite(text: string, colour: string, px = 48): Sprite {
	const canvas = document.createElement('canvas');
	const ctx = canvas.getContext('2d')!;
	ctx.font = `600 ${px}px 'Source Sans 3', sans-serif`;
	const w = Math.ceil(ctx.measureText(text).width) + 16;
	canvas.width = w;
	canvas.height = px + 16;
	ctx.font = `600 ${px}px 'Source Sans 3', sans-serif`;
	ctx.textBaseline = 'middle';
	ctx.lineWidth = 8;
	ctx.strokeStyle = 'rgba(8,12,16,0.9)';
	ctx.strokeText(text, 8, canvas.height / 2);
	ctx.fillStyle = colour;
	ctx.fillText(text, 8, canvas.height / 2);
	const sprite = new Sprite(new SpriteMaterial({ map: new CanvasTexture(canvas), depthTest: false, transparent: true }));
	sprite.scale.set(w / canvas.height, 1, 1);
	return sprite;
}

function pinSprite(n: number): Sprite {
	const s = 64;
	const canvas = document.createElement('canvas');
	canvas.width = canvas.height = s;
	const ctx = canvas.getContext('2d')!;
	ctx.fillStyle = '#0c1117';
	ctx.beginPath();
	ctx.arc(s / 2, s / 2, s * 0.46, 0, Math.PI * 2);
	ctx.fill();
	ctx.fillStyle = '#5ccfb2';
	ctx.beginPath();
	ctx.arc(s / 2, s / 2, s * 0.38, 0, Math.PI * 2);
	ctx.fill();
	ctx.fillStyle = '#0c1117';
	ctx.font = `700 ${n > 99 ? 22 : 30}px 'Source Sans 3', sans-serif`;
	ctx.textAlign = 'center';
	ctx.textBaseline = 'middle';
	ctx.fillText(String(n), s / 2, s / 2 + 1);
	const sprite = new Sprite(new SpriteMaterial({ map: new CanvasTexture(canvas), depthTest: false, transparent: true, sizeAttenuation: false }));
	sprite.scale.set(0.045, 0.045, 1);
	sprite.renderOrder = 20;
	return sprite;
}

/** Most segments one line overlay draws; above it an even sample is drawn and the rest are counted only. */
export const LINE_SEGMENT_CAP = 200_000;

/** Every k-th segment so that at most `max` remain (6 floats a segment). */
function sampleSegments(segments: Float32Array, max: number): Float32Array {
	const n = segments.length / 6;
	if (n <= max) return segments;
	const out = new Float32Array(6 * max);
	const step = n / max;
	for (let i = 0; i < max; i++) out.set(segments.subarray(6 * Math.floor(i * step), 6 * Math.floor(i * step) + 6), 6 * i);
	return out;
}

function lineObject(segments: Float32Array, colour: string, width: number, dashed: boolean, dash = 1): LineSegments2 {
	const geom = new LineSegmentsGeometry();
	geom.setPositions(segments);
	const mat = new LineMaterial({ color: new Color(colour).getHex(), linewidth: width, dashed, dashSize: dash, gapSize: dash * 0.7, worldUnits: false });
	mat.clipping = true;
	const line = new LineSegments2(geom, mat);
	if (dashed) line.computeLineDistances();
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

function midpoints(segments: Float32Array, max: number): Float32Array {
	const n = Math.min(segments.length / 6, max);
	const out = new Float32Array(3 * n);
	for (let s = 0; s < n; s++) {
		const o = 6 * s;
		out[3 * s] = 0.5 * (segments[o] + segments[o + 3]);
		out[3 * s + 1] = 0.5 * (segments[o + 1] + segments[o + 4]);
		out[3 * s + 2] = 0.5 * (segments[o + 2] + segments[o + 5]);
	}
	return out;
}

function boxSegments(b: Float32Array, o: number): number[] {
	const [x0, y0, z0, x1, y1, z1] = [b[o], b[o + 1], b[o + 2], b[o + 3], b[o + 4], b[o + 5]];
	const c = [
		[x0, y0, z0], [x1, y0, z0], [x1, y1, z0], [x0, y1, z0],
		[x0, y0, z1], [x1, y0, z1], [x1, y1, z1], [x0, y1, z1]
	];
	const e = [0, 1, 1, 2, 2, 3, 3, 0, 4, 5, 5, 6, 6, 7, 7, 4, 0, 4, 1, 5, 2, 6, 3, 7];
	const out: number[] = [];
	for (let i = 0; i < e.length; i += 2) out.push(...c[e[i]], ...c[e[i + 1]]);
	return out;
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
	private inset = new Scene();
	private insetCamera = new PerspectiveCamera(40, 1, 0.1, 100);
	private container: HTMLElement;
	private mesh: Mesh | null = null;
	/** Coarse stand-in shown instead of the mesh while the camera moves. */
	private proxy: Mesh | null = null;
	private moving = false;
	/** When the mesh first became visible (performance.now), for the debug hook. */
	meshShown = 0;
	private wire: Mesh | null = null;
	private compareMesh: Mesh | null = null;
	private overlayGroups = new Map<OverlayKind, Group>();
	private highlightGroup = new Group();
	private pinGroup = new Group();
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
	private compareMode: CompareMode | null = null;
	private colourMode: ColourMode = 'plain';
	private deviation: { distances: Float32Array; max: number } | null = null;
	private pins: { id: string; sprite: Sprite; point: Vector3 }[] = [];
	private shellColours: Float32Array | null = null;
	private flowArrow: ArrowHelper | null = null;
	private flowLabel: Sprite | null = null;
	private visible: Record<OverlayKind, boolean> = Object.fromEntries(KIND_ORDER.map((k) => [k, true])) as Record<OverlayKind, boolean>;

	constructor(container: HTMLElement, flowDirection: [number, number, number]) {
		this.container = container;
		this.renderer = new WebGLRenderer({ antialias: false, preserveDrawingBuffer: true, powerPreference: 'high-performance' });
		this.renderer.setPixelRatio(Math.min(window.devicePixelRatio, 2));
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
		this.scene.add(this.highlightGroup, this.pinGroup);
		this.buildInset(flowDirection);
		this.resizeObserver = new ResizeObserver(() => this.resize());
		this.resizeObserver.observe(container);
		this.resize();
	}

	private buildInset(flow: [number, number, number]): void {
		this.insetCamera.up.set(0, 0, 1);
		const axes: [Vector3, string, string][] = [
			[new Vector3(1, 0, 0), 'X', '#e8a7a0'],
			[new Vector3(0, 1, 0), 'Y', '#b9dca3'],
			[new Vector3(0, 0, 1), 'Z', '#a3bfe8']
		];
		for (const [dir, name, colour] of axes) {
			const arrow = new ArrowHelper(dir, new Vector3(), 1, new Color(colour).getHex(), 0.22, 0.1);
			this.inset.add(arrow);
			const label = textSprite(name, colour);
			label.position.copy(dir).multiplyScalar(1.3);
			label.scale.multiplyScalar(0.42);
			this.inset.add(label);
		}
		this.setFlowDirection(flow);
	}

	setFlowDirection(flow: [number, number, number]): void {
		if (this.flowArrow) {
			this.inset.remove(this.flowArrow);
			this.flowArrow.dispose();
		}
		if (this.flowLabel) {
			this.inset.remove(this.flowLabel);
			this.flowLabel.material.map?.dispose();
			this.flowLabel.material.dispose();
		}
		const d = new Vector3(...flow);
		if (d.lengthSq() === 0) d.set(1, 0, 0);
		d.normalize();
		// The flow arrow comes in towards the origin along the flow direction, like the oncoming stream.
		this.flowArrow = new ArrowHelper(d, d.clone().multiplyScalar(-1.15), 1.0, 0x5ccfb2, 0.3, 0.16);
		this.inset.add(this.flowArrow);
		this.flowLabel = textSprite('flow', '#8fe3cf');
		this.flowLabel.position.copy(d).multiplyScalar(-1.35).add(new Vector3(0, 0, -0.25));
		this.flowLabel.scale.multiplyScalar(0.36);
		this.inset.add(this.flowLabel);
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

	setMesh(positions: Float32Array, indices: Uint32Array, bvh: BvhData | null, proxy: { positions: Float32Array; indices: Uint32Array } | null = null): void {
		this.clearMesh();
		const geom = new BufferGeometry();
		geom.setAttribute('position', new BufferAttribute(positions, 3));
		geom.setIndex(new BufferAttribute(indices, 1));
		geom.computeBoundingBox();
		geom.computeBoundingSphere();
		if (bvh) geom.boundsTree = MeshBVH.deserialize(bvh as never, geom, { setIndex: false });
		else geom.computeBoundsTree({ indirect: true });
		const mat = meshMaterial();
		this.mesh = new Mesh(geom, mat);
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
		if (proxy) {
			const pg = new BufferGeometry();
			pg.setAttribute('position', new BufferAttribute(proxy.positions, 3));
			pg.setIndex(new BufferAttribute(proxy.indices, 1));
			this.proxy = new Mesh(pg, meshMaterial());
			this.proxy.visible = false;
			this.proxy.raycast = () => {};
			this.scene.add(this.proxy);
		}
		this.triCount = indices.length / 3;
		this.bboxMin.copy(geom.boundingBox!.min);
		this.bboxMax.copy(geom.boundingBox!.max);
		this.bounds.copy(geom.boundingSphere!);
		this.camera.near = this.bounds.radius / 200;
		this.camera.far = this.bounds.radius * 200;
		this.camera.updateProjectionMatrix();
		this.updateSection();
		this.fit(false);
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
		if (this.proxy) {
			this.scene.remove(this.proxy);
			this.proxy.geometry.dispose();
			(this.proxy.material as Material).dispose();
		}
		this.mesh = this.wire = this.proxy = null;
		this.shellColours = null;
	}

	setOverlays(o: MeshOverlays): void {
		for (const g of this.overlayGroups.values()) this.disposeGroup(g);
		this.overlayGroups.clear();
		this.sampled = {};
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
		if (o.holeSegments.length) {
			const centres = new Float32Array(3 * o.holes.length);
			o.holes.forEach((h, i) => centres.set(h.centroid, 3 * i));
			add('holes', lineObject(o.holeSegments, st.holes.colour, 4.5, true, dash), markerPoints(this.markerTextures, centres, st.holes.marker, st.holes.colour, 26));
		}
		if (o.nonManifoldEdgeSegments.length) {
			const outer = lineObject(o.nonManifoldEdgeSegments, st.nonManifoldEdges.colour, 7, false);
			const inner = lineObject(o.nonManifoldEdgeSegments, '#0c1117', 2.2, false);
			inner.renderOrder = 1;
			add('nonManifoldEdges', outer, inner, markerPoints(this.markerTextures, midpoints(o.nonManifoldEdgeSegments, 5000), st.nonManifoldEdges.marker, st.nonManifoldEdges.colour, 20));
		}
		if (o.nonManifoldVertexPoints.length) add('nonManifoldVertices', markerPoints(this.markerTextures, o.nonManifoldVertexPoints, st.nonManifoldVertices.marker, st.nonManifoldVertices.colour, 24));
		if (o.selfIntersectionPoints.length) {
			add(
				'selfIntersections',
				this.faceSubset(o.selfIntersectionFaces, patternMaterial(st.selfIntersections.colour, 1, 0.9, 7)),
				markerPoints(this.markerTextures, o.selfIntersectionPoints, st.selfIntersections.marker, st.selfIntersections.colour, 22)
			);
		}
		if (o.shortEdgeSegments.length) {
			const drawn = sampleSegments(o.shortEdgeSegments, LINE_SEGMENT_CAP);
			if (drawn !== o.shortEdgeSegments) this.sampled.shortEdges = { drawn: drawn.length / 6, total: o.shortEdgeSegments.length / 6 };
			add('shortEdges', lineObject(drawn, st.shortEdges.colour, 5, false), markerPoints(this.markerTextures, midpoints(sampleSegments(o.shortEdgeSegments, 20000), 20000), st.shortEdges.marker, st.shortEdges.colour, 12));
		}
		if (o.degenerateFaces.length) {
			add('degenerateFaces', markerPoints(this.markerTextures, this.faceCentres(o.degenerateFaces, 20000), st.degenerateFaces.marker, st.degenerateFaces.colour, 20));
		}
		if (o.flippedFaces.length) add('flippedFaces', this.faceSubset(o.flippedFaces, patternMaterial(st.flippedFaces.colour, 0, 0.85, 6)));
		if (o.floatingShells.length) {
			const box: number[] = [];
			const centres = new Float32Array(3 * o.floatingShells.length);
			for (let i = 0; i < o.floatingShells.length; i++) {
				box.push(...boxSegments(o.floatingBoxes, 6 * i));
				for (let a = 0; a < 3; a++) centres[3 * i + a] = 0.5 * (o.floatingBoxes[6 * i + a] + o.floatingBoxes[6 * i + 3 + a]);
			}
			add(
				'floatingShells',
				this.faceSubset(o.floatingFaces, patternMaterial(st.floatingShells.colour, 2, 0.35, 1)),
				lineObject(Float32Array.from(box), st.floatingShells.colour, 2.5, true, dash * 0.25),
				markerPoints(this.markerTextures, centres, st.floatingShells.marker, st.floatingShells.colour, 26)
			);
		}
		if (this.colourMode === 'shells') this.applyColours();
		this.requestRender();
	}

	/** Centre of each listed face, 3 floats per face. */
	faceCentres(faces: Uint32Array, max = Infinity): Float32Array {
		const n = Math.min(faces.length, max);
		const out = new Float32Array(3 * n);
		if (!this.mesh) return out;
		const p = this.mesh.geometry.getAttribute('position').array as Float32Array;
		const idx = this.mesh.geometry.getIndex()!.array as Uint32Array;
		for (let i = 0; i < n; i++) {
			const t3 = 3 * faces[i];
			for (let a = 0; a < 3; a++) out[3 * i + a] = (p[3 * idx[t3] + a] + p[3 * idx[t3 + 1] + a] + p[3 * idx[t3 + 2] + a]) / 3;
		}
		return out;
	}

	/** Centre and circumradius-ish size of the listed faces. */
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

	private faceSubset(faces: Uint32Array, mat: Material): Mesh {
		const src = this.mesh!.geometry;
		const idx = src.getIndex()!.array as Uint32Array;
		const sub = new Uint32Array(3 * faces.length);
		for (let i = 0; i < faces.length; i++) {
			const t3 = 3 * faces[i];
			sub[3 * i] = idx[t3];
			sub[3 * i + 1] = idx[t3 + 1];
			sub[3 * i + 2] = idx[t3 + 2];
		}
		const geom = new BufferGeometry();
		// Shares the mesh's position attribute: one upload, no copy.
		geom.setAttribute('position', src.getAttribute('position'));
		geom.setIndex(new BufferAttribute(sub, 1));
		geom.userData.sharesPosition = true;
		const m = new Mesh(geom, mat);
		m.renderOrder = 2;
		m.raycast = () => {};
		return m;
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
		for (const p of this.pins) {
			this.pinGroup.remove(p.sprite);
			p.sprite.material.map?.dispose();
			p.sprite.material.dispose();
		}
		this.pins = pins.map((p) => {
			const sprite = pinSprite(p.number);
			sprite.position.set(...p.point);
			this.pinGroup.add(sprite);
			return { id: p.id, sprite, point: new Vector3(...p.point) };
		});
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
			if (focus.faces && focus.faces.length) this.highlightGroup.add(this.faceSubset(focus.faces, patternMaterial('#ffffff', 2, 0.55, 1)));
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
		if (!this.mesh) return null;
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
			if (this.colourMode === 'deviation' && this.deviation && h.face) hit.deviation = this.deviationAt(h.point, h.face.a, h.face.b, h.face.c);
			return hit;
		}
		return null;
	}

	private deviationAt(p: Vector3, a: number, b: number, c: number): number {
		const pos = this.mesh!.geometry.getAttribute('position');
		const va = new Vector3().fromBufferAttribute(pos, a), vb = new Vector3().fromBufferAttribute(pos, b), vc = new Vector3().fromBufferAttribute(pos, c);
		const w = Triangle.getBarycoord(p, va, vb, vc, new Vector3());
		const d = this.deviation!.distances;
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
		const rect = this.renderer.domElement.getBoundingClientRect();
		let best: string | null = null, bestD = 14;
		const v = new Vector3();
		for (const p of this.pins) {
			v.copy(p.point).project(this.camera);
			if (v.z > 1) continue;
			const x = rect.left + ((v.x + 1) / 2) * rect.width * (this.compareMode === 'side' ? 0.5 : 1);
			const y = rect.top + ((1 - v.y) / 2) * rect.height;
			const d = Math.hypot(x - clientX, y - clientY);
			if (d < bestD) (bestD = d), (best = p.id);
		}
		return best;
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
		const size = r.getSize(new Vector2());
		const w = size.x, h = size.y;
		const coarse = !!this.proxy && (this.moving || this.anim !== null);
		if (this.proxy && this.mesh && this.meshShown) {
			this.proxy.visible = coarse;
			this.mesh.visible = !coarse;
			// Colour modes are per vertex of the full mesh; the stand-in shows plain while moving.
		}
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
		const planes = r.clippingPlanes;
		r.clippingPlanes = [];
		const dir = this.camera.position.clone().sub(this.controls.target).normalize();
		this.insetCamera.position.copy(dir.multiplyScalar(4.6));
		this.insetCamera.up.copy(this.camera.up);
		this.insetCamera.lookAt(0, 0, 0);
		r.setViewport(4, 4, INSET_PX, INSET_PX);
		r.setScissor(4, 4, INSET_PX, INSET_PX);
		r.clearDepth();
		r.render(this.inset, this.insetCamera);
		r.clippingPlanes = planes;
		r.setScissorTest(false);
		if (finish) {
			const gl = r.getContext();
			const px = new Uint8Array(4);
			gl.readPixels(0, 0, 1, 1, gl.RGBA, gl.UNSIGNED_BYTE, px);
		}
		const ms = performance.now() - t0;
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
		this.frameTimes = [];
		this.moving = moving;
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
		this.renderNow();
		return this.frameStats();
	}

	/** GPU objects this viewer's renderer holds (for the leak check in the dev harness tests). */
	gpuMemory(): { geometries: number; textures: number } {
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

	dispose(): void {
		this.disposed = true;
		this.resizeObserver.disconnect();
		this.controls.dispose();
		for (const g of this.overlayGroups.values()) this.disposeGroup(g);
		this.disposeGroup(this.highlightGroup);
		this.setPins([]);
		this.setCompare(null, null, null);
		this.clearMesh();
		this.inset.traverse((o) => {
			const m = o as Mesh;
			m.geometry?.dispose();
			const mat = m.material as (Material & { map?: Texture | null }) | undefined;
			mat?.map?.dispose();
			mat?.dispose();
		});
		this.markerTextures.dispose();
		this.renderer.dispose();
		this.renderer.forceContextLoss();
		this.renderer.domElement.remove();
	}
}
