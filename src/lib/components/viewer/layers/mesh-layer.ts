/**
 * The part itself: the mesh (first the file's own triangles of a large binary STL, then the welded
 * mesh in their place), its coarse stand-in drawn while the camera moves, wireframe, the colourings
 * (plain, by shell, wall or gap in cells per vertex; deviation per face corner) and picking through the
 * three-mesh-bvh tree. Face subsets for the overlays share its position buffer.
 */
import {
	Box3,
	BufferAttribute,
	BufferGeometry,
	DoubleSide,
	Float32BufferAttribute,
	Group,
	Mesh,
	MeshBasicMaterial,
	OrthographicCamera,
	Scene,
	MeshLambertMaterial,
	Plane,
	Raycaster,
	Sphere,
	Triangle,
	Vector2,
	Vector3,
	type Camera,
	type Material
} from 'three';
import { pointBounds } from '$lib/mesh/bounds';
import { acceleratedRaycast, computeBoundsTree, disposeBoundsTree, MeshBVH } from 'three-mesh-bvh';
import type { BvhData } from '../protocol';
import { faceIndex } from '../overlay-draw';
import { hexRgb, MESH_COLOUR, rampColour, SHELL_COLOURS } from '../palette';
import { addLights } from './compare-layer';

BufferGeometry.prototype.computeBoundsTree = computeBoundsTree;
BufferGeometry.prototype.disposeBoundsTree = disposeBoundsTree;

/** wall, gap: thickness or gap width in target cells (setCellField). */
export type ColourMode = 'plain' | 'shells' | 'deviation' | 'wall' | 'gap';

export interface MeshHit {
	point: [number, number, number];
	face: number;
	shell: number;
	/** Deviation at the point (interpolated from the face's corners, as drawn) while the deviation colouring is shown. */
	deviation?: number;
	/** Wall thickness or gap width at the point, in cells, while that colouring is shown. */
	cells?: number;
}

const BACK_COLOUR_SCALE = 'vec3(0.62, 0.5, 0.42)';

export function meshMaterial(colour = MESH_COLOUR): MeshLambertMaterial {
	const mat = new MeshLambertMaterial({ color: colour, flatShading: true, side: DoubleSide, polygonOffset: true, polygonOffsetFactor: 1, polygonOffsetUnits: 1 });
	mat.onBeforeCompile = (shader) => {
		// Back faces (seen through holes, cuts or flipped faces) in a warm dark tone.
		shader.fragmentShader = shader.fragmentShader.replace('#include <opaque_fragment>', `if (!gl_FrontFacing) outgoingLight *= ${BACK_COLOUR_SCALE};\n#include <opaque_fragment>`);
	};
	return mat;
}

/**
 * Bounding box and sphere of a position buffer, as three.js computes them (the sphere about the
 * box's centre, through the farthest point) in two plain loops: three.js's own go through the
 * attribute's accessors and took about 100 ms of the first frame for 3 million vertices.
 */
export function positionBounds(positions: Float32Array): { box: Box3; sphere: Sphere } {
	const [x0, y0, z0, x1, y1, z1] = pointBounds(positions);
	const box = new Box3(new Vector3(x0, y0, z0), new Vector3(x1, y1, z1));
	const cx = 0.5 * (x0 + x1), cy = 0.5 * (y0 + y1), cz = 0.5 * (z0 + z1);
	let r2 = 0;
	for (let i = 0; i + 2 < positions.length; i += 3) {
		const dx = positions[i] - cx, dy = positions[i + 1] - cy, dz = positions[i + 2] - cz;
		const d2 = dx * dx + dy * dy + dz * dz;
		if (d2 > r2) r2 = d2;
	}
	if (positions.length < 3) box.makeEmpty();
	return { box, sphere: new Sphere(new Vector3(cx, cy, cz), positions.length < 3 ? -1 : Math.sqrt(r2)) };
}

/**
 * A triangle a few pixels wide in the mesh's own material and lights, for warmUp: software WebGL
 * (SwiftShader) builds a program's machine code at its first draw, not when it is linked.
 */
function warmUpScene(): { scene: Scene; camera: OrthographicCamera; mesh: Mesh } {
	const geom = new BufferGeometry();
	geom.setAttribute('position', new BufferAttribute(new Float32Array([0, 0, 0, 0.01, 0, 0, 0, 0.01, 0]), 3));
	const mesh = new Mesh(geom, meshMaterial());
	mesh.frustumCulled = false;
	const camera = new OrthographicCamera(-1, 1, 1, -1, 0.1, 10);
	camera.position.set(0, 0, 1);
	const scene = new Scene();
	addLights(scene);
	scene.add(mesh);
	return { scene, camera, mesh };
}

export class MeshLayer {
	readonly group = new Group();
	/** When the mesh's shaders were ready and its first frame asked for (performance.now). */
	shownAt = 0;
	private mesh: Mesh | null = null;
	private proxy: Mesh | null = null;
	private wire: Mesh | null = null;
	private triCount = 0;
	private faceShell: Int32Array | null = null;
	private colourMode: ColourMode = 'plain';
	private deviation: { distances: Float32Array; faces: Float32Array; max: number } | null = null;
	/**
	 * The deviation colouring, drawn instead of the mesh: its faces unshared (9 floats each), each
	 * corner coloured by the larger of its vertex's and its face centre's distance, so a face whose
	 * centre moved (a filled hole's cap moves no vertex) shows, and no face is drawn below either
	 * sample. The mesh stays for picking, its material hidden.
	 */
	private faceView: Mesh | null = null;
	/** Per-vertex wall and gap in cells, and the top of the colour scale (cells). */
	private cellField: { wall: Float32Array; gap: Float32Array; scaleCells: number } | null = null;
	private shellColours: Float32Array | null = null;
	private raycaster = new Raycaster();
	/** The warm-up triangle, kept until a mesh's own program is compiled (freeing it earlier would free the shared program). */
	private warm: Mesh | null = null;
	/** When the warm-up draw was done and how long it took (performance.now, ms; 0 until then). */
	warmedAt = 0;
	warmUpMs = 0;

	/**
	 * compile: the renderer's compileAsync for an object (a synchronous link on software WebGL holds
	 * the page for seconds). onShown: the mesh can be drawn. onBounds: a new mesh's extent.
	 */
	constructor(
		private compile: (obj: Mesh) => Promise<unknown>,
		private onShown: () => void,
		private onBounds: (box: Box3, sphere: Sphere) => void
	) {}

	/**
	 * Draws a tiny triangle with the mesh's material once, then clears, while the file downloads:
	 * the program and the software rasteriser's code for it are ready before the mesh arrives, so
	 * the first frame of the mesh is upload and raster only. draw: renders a scene with a camera.
	 */
	warmUp(compile: (obj: Mesh, scene: Scene, camera: OrthographicCamera) => Promise<unknown>, draw: (scene: Scene, camera: OrthographicCamera) => void): void {
		const w = warmUpScene();
		this.warm = w.mesh;
		compile(w.mesh, w.scene, w.camera)
			.catch(() => {})
			.then(() => {
				if (this.warm !== w.mesh || this.shownAt) return;
				const t = performance.now();
				draw(w.scene, w.camera);
				this.warmedAt = performance.now();
				this.warmUpMs = this.warmedAt - t;
			});
	}

	private freeWarmUp(): void {
		if (!this.warm) return;
		this.warm.geometry.dispose();
		(this.warm.material as Material).dispose();
		this.warm.removeFromParent();
		this.warm = null;
	}

	get triangles(): number {
		return this.triCount;
	}

	get pickReady(): boolean {
		return !!this.mesh?.geometry.boundsTree;
	}

	/** Whether the mesh can be drawn (its shaders are ready). */
	get visible(): boolean {
		return !!this.mesh?.visible;
	}

	/** A large binary STL's triangles as the file holds them (unwelded, 9 floats each), drawn until setMesh brings the welded mesh. */
	setPreview(positions: Float32Array): void {
		this.clear();
		const geom = new BufferGeometry();
		geom.setAttribute('position', new BufferAttribute(positions, 3));
		this.show(geom, positions.length / 9);
	}

	/** The welded mesh; it takes the preview's place without a new shader or a new camera. bvh null: picking waits for setBvh. */
	setMesh(positions: Float32Array, indices: Uint32Array, bvh: BvhData | null): void {
		const geom = new BufferGeometry();
		geom.setAttribute('position', new BufferAttribute(positions, 3));
		geom.setIndex(new BufferAttribute(indices, 1));
		if (this.mesh && !this.mesh.geometry.getIndex()) {
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
			this.clear();
			this.show(geom, indices.length / 3);
		}
		if (bvh) this.setBvh(bvh);
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
		this.group.add(this.proxy);
	}

	get hasProxy(): boolean {
		return !!this.proxy;
	}

	/** The stand-in instead of the mesh (plain colour: the colourings are per vertex of the full mesh). */
	setCoarse(coarse: boolean): void {
		if (!this.proxy || !this.mesh || !this.shownAt) return;
		this.proxy.visible = coarse;
		this.mesh.visible = !coarse;
		if (this.faceView) this.faceView.visible = !coarse;
		if (this.wire) this.wire.visible = this.wire.userData.on && !coarse;
	}

	/** Shell of each face (from the overlays), for the colouring by shell and the picked face's shell. */
	setFaceShells(faceShell: Int32Array | null): void {
		this.faceShell = faceShell;
		this.shellColours = null;
		if (this.colourMode === 'shells') this.applyColours();
	}

	private show(geom: BufferGeometry, triangles: number): void {
		const { box, sphere } = positionBounds(geom.getAttribute('position').array as Float32Array);
		geom.boundingBox = box;
		geom.boundingSphere = sphere;
		const mesh = new Mesh(geom, meshMaterial());
		mesh.raycast = acceleratedRaycast;
		mesh.visible = false;
		this.mesh = mesh;
		this.group.add(mesh);
		this.compile(mesh)
			.catch(() => {})
			.then(() => {
				if (this.mesh !== mesh) return;
				this.freeWarmUp();
				mesh.visible = true;
				this.shownAt = performance.now();
				this.onShown();
			});
		this.triCount = triangles;
		this.onBounds(geom.boundingBox!, geom.boundingSphere!);
	}

	private clear(): void {
		this.dropFaceView();
		for (const m of [this.mesh, this.wire]) {
			if (!m) continue;
			this.group.remove(m);
			(m.material as Material).dispose();
		}
		if (this.mesh) {
			this.mesh.geometry.disposeBoundsTree?.();
			this.mesh.geometry.dispose();
		}
		this.clearProxy();
		this.mesh = this.wire = null;
		this.shellColours = null;
		this.shownAt = 0;
	}

	private clearProxy(): void {
		if (!this.proxy) return;
		this.group.remove(this.proxy);
		this.proxy.geometry.dispose();
		(this.proxy.material as Material).dispose();
		this.proxy = null;
	}

	setWireframe(on: boolean): void {
		if (!this.mesh) return;
		if (on && !this.wire) {
			this.wire = new Mesh(this.mesh.geometry, new MeshBasicMaterial({ color: '#0c1117', wireframe: true, transparent: true, opacity: 0.45 }));
			this.wire.raycast = () => {};
			this.group.add(this.wire);
		}
		if (this.wire) {
			this.wire.userData.on = on;
			this.wire.visible = on;
		}
	}

	setColourMode(mode: ColourMode): void {
		this.colourMode = mode;
		this.applyColours();
	}

	get colour(): ColourMode {
		return this.colourMode;
	}

	/** Distance of each vertex and of each face's centre to the compared revision; max: the top of the colour scale. */
	setDeviation(distances: Float32Array | null, faces: Float32Array | null, max: number): void {
		this.deviation = distances && faces ? { distances, faces, max } : null;
		if (this.colourMode === 'deviation') this.applyColours();
	}

	get hasDeviation(): boolean {
		return !!this.deviation;
	}

	/** Wall and gap per vertex in cells; scaleCells is the value drawn at the bright end of the ramp. */
	setCellField(field: { wall: Float32Array; gap: Float32Array; scaleCells: number } | null): void {
		this.cellField = field;
		if (this.colourMode === 'wall' || this.colourMode === 'gap') this.applyColours();
	}

	private dropFaceView(): void {
		if (!this.faceView) return;
		this.group.remove(this.faceView);
		this.faceView.geometry.dispose();
		(this.faceView.material as Material).dispose();
		this.faceView = null;
		if (this.mesh) (this.mesh.material as Material).visible = true;
	}

	/** The deviation value drawn at corner k of face t. */
	private cornerDeviation(t: number, v: number): number {
		const d = this.deviation!;
		return Math.max(d.distances[v], d.faces[t]);
	}

	private showFaceView(geom: BufferGeometry, ia: Uint32Array): void {
		const p = geom.getAttribute('position').array as Float32Array;
		const T = this.triCount;
		const pos = new Float32Array(9 * T), col = new Float32Array(9 * T);
		const inv = this.deviation!.max > 0 ? 1 / this.deviation!.max : 0;
		for (let t = 0; t < T; t++) {
			for (let k = 0; k < 3; k++) {
				const v = ia[3 * t + k], o = 9 * t + 3 * k;
				pos[o] = p[3 * v];
				pos[o + 1] = p[3 * v + 1];
				pos[o + 2] = p[3 * v + 2];
				rampColour(this.cornerDeviation(t, v) * inv, col, o);
			}
		}
		const g = new BufferGeometry();
		g.setAttribute('position', new BufferAttribute(pos, 3));
		g.setAttribute('color', new BufferAttribute(col, 3));
		g.boundingBox = geom.boundingBox;
		g.boundingSphere = geom.boundingSphere;
		const mat = meshMaterial('#ffffff');
		mat.vertexColors = true;
		const view = new Mesh(g, mat);
		view.raycast = () => {};
		view.visible = this.mesh!.visible;
		this.faceView = view;
		this.group.add(view);
		(this.mesh!.material as Material).visible = false;
	}

	private applyColours(): void {
		if (!this.mesh) return;
		this.dropFaceView();
		const geom = this.mesh.geometry;
		const mat = this.mesh.material as MeshLambertMaterial;
		const vertCount = geom.getAttribute('position').count;
		const idx = geom.getIndex();
		let colours: Float32Array | null = null;
		if (this.colourMode === 'shells' && this.faceShell && idx) {
			if (!this.shellColours) {
				const rgb = SHELL_COLOURS.map(hexRgb);
				const ia = idx.array as Uint32Array;
				colours = new Float32Array(3 * vertCount).fill(0.55);
				for (let t = 0; t < this.triCount; t++) {
					const s = this.faceShell[t];
					if (s < 0) continue;
					const c = rgb[s % rgb.length];
					for (let k = 0; k < 3; k++) colours.set(c, 3 * ia[3 * t + k]);
				}
				this.shellColours = colours;
			}
			colours = this.shellColours;
		} else if (this.colourMode === 'deviation' && this.deviation && idx && this.deviation.distances.length === vertCount && this.deviation.faces.length === this.triCount) {
			this.showFaceView(geom, idx.array as Uint32Array);
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
	}

	/** First face hit along a ray from the camera through ndc, through the BVH; with a section, hits on the cut-away side are skipped. */
	pick(ndc: Vector2, camera: Camera, section: Plane | null): MeshHit | null {
		if (!this.mesh?.geometry.boundsTree) return null;
		this.raycaster.setFromCamera(ndc, camera);
		(this.raycaster as Raycaster & { firstHitOnly?: boolean }).firstHitOnly = !section;
		const wasVisible = this.mesh.visible;
		this.mesh.visible = true;
		const hits = this.raycaster.intersectObject(this.mesh, false);
		this.mesh.visible = wasVisible;
		for (const h of hits) {
			if (section && section.distanceToPoint(h.point) < 0) continue;
			const face = h.faceIndex ?? -1;
			const hit: MeshHit = { point: [h.point.x, h.point.y, h.point.z], face, shell: this.faceShell && face >= 0 ? this.faceShell[face] : -1 };
			if (this.faceView && h.face && face >= 0) {
				const { a, b, c } = h.face;
				hit.deviation = this.blend(h.point, a, b, c, this.cornerDeviation(face, a), this.cornerDeviation(face, b), this.cornerDeviation(face, c));
			}
			if ((this.colourMode === 'wall' || this.colourMode === 'gap') && this.cellField && h.face) {
				hit.cells = this.fieldAt(this.colourMode === 'wall' ? this.cellField.wall : this.cellField.gap, h.point, h.face.a, h.face.b, h.face.c);
			}
			return hit;
		}
		return null;
	}

	/** A per-vertex field at a point of face a, b, c (barycentric). */
	private fieldAt(d: Float32Array, p: Vector3, a: number, b: number, c: number): number {
		return this.blend(p, a, b, c, d[a], d[b], d[c]);
	}

	/** Values da, db, dc at the corners a, b, c of a face, interpolated at p (barycentric, as the GPU does). */
	private blend(p: Vector3, a: number, b: number, c: number, da: number, db: number, dc: number): number {
		const pos = this.mesh!.geometry.getAttribute('position');
		const va = new Vector3().fromBufferAttribute(pos, a), vb = new Vector3().fromBufferAttribute(pos, b), vc = new Vector3().fromBufferAttribute(pos, c);
		const w = Triangle.getBarycoord(p, va, vb, vc, new Vector3());
		if (!w) return (da + db + dc) / 3;
		return w.x * da + w.y * db + w.z * dc;
	}

	/** Centre and size of the listed faces (their corners' bounding box), for flying to them. */
	faceBounds(faces: Uint32Array): { center: [number, number, number]; radius: number } | null {
		const idxAttr = this.mesh?.geometry.getIndex();
		if (!this.mesh || !idxAttr) return null;
		const min = [Infinity, Infinity, Infinity], max = [-Infinity, -Infinity, -Infinity];
		const p = this.mesh.geometry.getAttribute('position').array as Float32Array;
		const idx = idxAttr.array as Uint32Array;
		for (let i = 0; i < faces.length; i++) {
			for (let k = 0; k < 3; k++) {
				const v3 = 3 * idx[3 * faces[i] + k];
				for (let a = 0; a < 3; a++) {
					min[a] = Math.min(min[a], p[v3 + a]);
					max[a] = Math.max(max[a], p[v3 + a]);
				}
			}
		}
		return { center: [0.5 * (min[0] + max[0]), 0.5 * (min[1] + max[1]), 0.5 * (min[2] + max[2])], radius: 0.5 * Math.hypot(max[0] - min[0], max[1] - min[1], max[2] - min[2]) };
	}

	/** Index buffer (3 per face) of the listed face ids of the welded mesh. */
	faceIndexOf(faces: Uint32Array): Uint32Array {
		const idx = this.mesh?.geometry.getIndex();
		return idx ? faceIndex(idx.array as Uint32Array, faces) : new Uint32Array(0);
	}

	/** A mesh of some faces, from an index buffer into this mesh's vertices; it shares the position buffer (one upload, no copy). */
	faceSubset(index: Uint32Array, mat: Material): Mesh | null {
		if (!this.mesh) return null;
		const geom = new BufferGeometry();
		geom.setAttribute('position', this.mesh.geometry.getAttribute('position'));
		geom.setIndex(new BufferAttribute(index, 1));
		geom.userData.sharesPosition = true;
		const m = new Mesh(geom, mat);
		m.renderOrder = 2;
		m.raycast = () => {};
		return m;
	}

	/** Positions and indices of the welded mesh: the live arrays behind the GPU buffers, not copies; callers copy before transferring. */
	buffers(): { positions: Float32Array; indices: Uint32Array } | null {
		const g = this.mesh?.geometry;
		const idx = g?.getIndex();
		if (!g || !idx) return null;
		return { positions: g.getAttribute('position').array as Float32Array, indices: idx.array as Uint32Array };
	}

	/** The objects drawn while the camera moves, for the bench's per-object figures. */
	movingObjects(): Mesh[] {
		return this.proxy ? [this.proxy] : this.mesh ? [this.mesh] : [];
	}

	dispose(): void {
		this.clear();
		this.freeWarmUp();
		this.group.removeFromParent();
	}
}
