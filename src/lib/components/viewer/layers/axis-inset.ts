/**
 * Axis inset, bottom left of the view: X, Y, Z arrows and the flow arrow, turned with the main
 * camera. Owns its scene, camera, geometries and label textures; dispose() frees them all.
 */
import { ArrowHelper, CanvasTexture, Color, PerspectiveCamera, Scene, Sprite, SpriteMaterial, Vector3, type Camera, type Material, type Mesh, type Texture, type WebGLRenderer } from 'three';

const INSET_PX = 132;

export function textSprite(text: string, colour: string, px = 48): Sprite {
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

export class AxisInset {
	private scene = new Scene();
	private camera = new PerspectiveCamera(40, 1, 0.1, 100);
	private flowArrow: ArrowHelper | null = null;
	private flowLabel: Sprite | null = null;

	constructor(flow: [number, number, number]) {
		this.camera.up.set(0, 0, 1);
		const axes: [Vector3, string, string][] = [
			[new Vector3(1, 0, 0), 'X', '#e8a7a0'],
			[new Vector3(0, 1, 0), 'Y', '#b9dca3'],
			[new Vector3(0, 0, 1), 'Z', '#a3bfe8']
		];
		for (const [dir, name, colour] of axes) {
			const arrow = new ArrowHelper(dir, new Vector3(), 1, new Color(colour).getHex(), 0.22, 0.1);
			this.scene.add(arrow);
			const label = textSprite(name, colour);
			label.position.copy(dir).multiplyScalar(1.3);
			label.scale.multiplyScalar(0.42);
			this.scene.add(label);
		}
		this.setFlowDirection(flow);
	}

	/** Replaces the flow arrow and its label, freeing the old ones (a flow change leaks nothing). */
	setFlowDirection(flow: [number, number, number]): void {
		if (this.flowArrow) {
			this.scene.remove(this.flowArrow);
			this.flowArrow.dispose();
		}
		if (this.flowLabel) {
			this.scene.remove(this.flowLabel);
			this.flowLabel.material.map?.dispose();
			this.flowLabel.material.dispose();
		}
		const d = new Vector3(...flow);
		if (d.lengthSq() === 0) d.set(1, 0, 0);
		d.normalize();
		// The flow arrow comes in towards the origin along the flow direction, like the oncoming stream.
		this.flowArrow = new ArrowHelper(d, d.clone().multiplyScalar(-1.15), 1.0, 0x5ccfb2, 0.3, 0.16);
		this.scene.add(this.flowArrow);
		this.flowLabel = textSprite('flow', '#8fe3cf');
		this.flowLabel.position.copy(d).multiplyScalar(-1.35).add(new Vector3(0, 0, -0.25));
		this.flowLabel.scale.multiplyScalar(0.36);
		this.scene.add(this.flowLabel);
	}

	/** Draws the inset into the bottom-left corner, looking from where the main camera looks. */
	render(r: WebGLRenderer, main: Camera, target: Vector3): void {
		const planes = r.clippingPlanes;
		r.clippingPlanes = [];
		const dir = main.position.clone().sub(target).normalize();
		this.camera.position.copy(dir.multiplyScalar(4.6));
		this.camera.up.copy(main.up);
		this.camera.lookAt(0, 0, 0);
		r.setViewport(4, 4, INSET_PX, INSET_PX);
		r.setScissor(4, 4, INSET_PX, INSET_PX);
		r.clearDepth();
		r.render(this.scene, this.camera);
		r.clippingPlanes = planes;
	}

	dispose(): void {
		this.scene.traverse((o) => {
			const m = o as Mesh;
			m.geometry?.dispose();
			const mat = m.material as (Material & { map?: Texture | null }) | undefined;
			mat?.map?.dispose();
			mat?.dispose();
		});
		this.scene.clear();
		this.flowArrow = this.flowLabel = null;
	}
}
