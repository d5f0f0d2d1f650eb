/**
 * The revision compared with: its mesh, drawn side by side (a scene of its own on the right half,
 * same camera), overlaid (a translucent copy in the main scene) or not at all (deviation: the main
 * mesh is coloured instead, see MeshLayer).
 */
import { AmbientLight, BufferAttribute, BufferGeometry, DirectionalLight, DoubleSide, Mesh, MeshLambertMaterial, Scene } from 'three';

export type CompareMode = 'side' | 'overlay' | 'deviation';

/** The viewer's lights: a soft ambient, a key from above front right and a fill from behind. */
export function addLights(s: Scene): void {
	s.add(new AmbientLight(0xffffff, 0.55));
	const key = new DirectionalLight(0xffffff, 1.6);
	key.position.set(1, -1.4, 2);
	s.add(key);
	const fill = new DirectionalLight(0xffffff, 0.5);
	fill.position.set(-1.5, 1, -0.6);
	s.add(fill);
}

export class CompareLayer {
	/** Drawn on the right half in side-by-side mode. */
	readonly scene = new Scene();
	private mesh: Mesh | null = null;
	private modeNow: CompareMode | null = null;

	/** main: the viewer's scene, where the overlaid copy goes. */
	constructor(private main: Scene) {
		addLights(this.scene);
	}

	get mode(): CompareMode | null {
		return this.modeNow;
	}

	get loaded(): boolean {
		return !!this.mesh;
	}

	/** True when two views stand side by side. */
	get sideBySide(): boolean {
		return this.modeNow === 'side' && !!this.mesh;
	}

	/** The compare revision's mesh (null clears it) and how to draw it. */
	set(positions: Float32Array | null, indices: Uint32Array | null, mode: CompareMode | null): void {
		this.clear();
		if (positions && indices) {
			const geom = new BufferGeometry();
			geom.setAttribute('position', new BufferAttribute(positions, 3));
			geom.setIndex(new BufferAttribute(indices, 1));
			this.mesh = new Mesh(geom, new MeshLambertMaterial({ color: '#c9b38f', flatShading: true, side: DoubleSide }));
			this.mesh.raycast = () => {};
		}
		this.setMode(mode);
	}

	setMode(mode: CompareMode | null): void {
		this.modeNow = this.mesh ? mode : null;
		if (!this.mesh) return;
		this.mesh.removeFromParent();
		const mat = this.mesh.material as MeshLambertMaterial;
		if (mode === 'side') {
			this.scene.add(this.mesh);
			mat.transparent = false;
			mat.opacity = 1;
			mat.depthWrite = true;
		} else if (mode === 'overlay') {
			this.main.add(this.mesh);
			mat.transparent = true;
			mat.opacity = 0.45;
			mat.depthWrite = false;
		}
		mat.needsUpdate = true;
	}

	/** Positions and indices of the compare mesh: the live arrays, not copies. */
	buffers(): { positions: Float32Array; indices: Uint32Array } | null {
		if (!this.mesh) return null;
		return { positions: this.mesh.geometry.getAttribute('position').array as Float32Array, indices: this.mesh.geometry.getIndex()!.array as Uint32Array };
	}

	private clear(): void {
		if (!this.mesh) return;
		this.mesh.removeFromParent();
		this.mesh.geometry.dispose();
		(this.mesh.material as MeshLambertMaterial).dispose();
		this.mesh = null;
		this.modeNow = null;
	}

	dispose(): void {
		this.clear();
		this.scene.clear();
	}
}
