/**
 * The viewer's camera: perspective camera with Z up, orbit controls, framing the part (fit, the six
 * standard views, flying to a finding) and the eased camera moves. Knows whether the camera is
 * moving (a drag or a move in flight) so the other layers can draw their light versions.
 */
import { Box3, PerspectiveCamera, Sphere, Vector3 } from 'three';
import { OrbitControls } from 'three/examples/jsm/controls/OrbitControls.js';

export type ViewName = '+x' | '-x' | '+y' | '-y' | '+z' | '-z';

const FLY_MS = 400;

export class CameraRig {
	readonly camera: PerspectiveCamera;
	readonly controls: OrbitControls;
	/** A drag in progress (or the bench's scripted orbit). */
	dragging = false;
	private anim: { from: Vector3; to: Vector3; fromT: Vector3; toT: Vector3; t0: number } | null = null;
	private bounds = new Sphere(new Vector3(), 1);
	private box = new Box3(new Vector3(-1, -1, -1), new Vector3(1, 1, 1));

	/** onChange: the view needs a frame. aspect: width over height of one view. */
	constructor(
		dom: HTMLElement,
		private onChange: () => void,
		private aspect: () => number
	) {
		this.camera = new PerspectiveCamera(40, 1, 0.01, 1000);
		// Z up, the usual convention for hull and tow-body drawings.
		this.camera.up.set(0, 0, 1);
		this.camera.position.set(3, -4, 2.5);
		this.controls = new OrbitControls(this.camera, dom);
		this.controls.enableDamping = false;
		this.controls.addEventListener('change', () => this.onChange());
		this.controls.addEventListener('start', () => (this.dragging = true));
		this.controls.addEventListener('end', () => {
			this.dragging = false;
			this.onChange();
		});
	}

	get moving(): boolean {
		return this.dragging || this.anim !== null;
	}

	get animating(): boolean {
		return this.anim !== null;
	}

	/** The part's bounding box and sphere: near and far planes follow its size. */
	setBounds(box: Box3, sphere: Sphere): void {
		this.box.copy(box);
		this.bounds.copy(sphere);
		this.camera.near = sphere.radius / 200;
		this.camera.far = sphere.radius * 200;
		this.camera.updateProjectionMatrix();
	}

	/** Advances a camera move; true while it needs more frames. */
	step(): boolean {
		if (!this.anim) return false;
		const k = Math.min(1, (performance.now() - this.anim.t0) / FLY_MS);
		const e = k < 0.5 ? 2 * k * k : 1 - (-2 * k + 2) ** 2 / 2; // ease in-out (quadratic)
		this.camera.position.lerpVectors(this.anim.from, this.anim.to, e);
		this.controls.target.lerpVectors(this.anim.fromT, this.anim.toT, e);
		this.controls.update();
		if (k >= 1) this.anim = null;
		return this.anim !== null;
	}

	/** Sets the camera's aspect for the view about to be drawn. */
	setAspect(aspect: number): void {
		if (this.camera.aspect === aspect) return;
		this.camera.aspect = aspect;
		this.camera.updateProjectionMatrix();
	}

	/** Distance at which the bounding box fills about 85 % of the view from direction dir. */
	private fitDistance(dir: Vector3): number {
		const half = Math.tan((this.camera.fov * Math.PI) / 360);
		const aspect = Math.max(0.3, this.aspect());
		const right = new Vector3().crossVectors(dir, this.camera.up);
		if (right.lengthSq() < 1e-9) right.set(1, 0, 0);
		right.normalize();
		const up = new Vector3().crossVectors(right, dir).normalize();
		let need = 0;
		const c = this.bounds.center, lo = this.box.min, hi = this.box.max;
		for (let i = 0; i < 8; i++) {
			const p = new Vector3(i & 1 ? hi.x : lo.x, i & 2 ? hi.y : lo.y, i & 4 ? hi.z : lo.z).sub(c);
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

	/** Flies to frame a sphere (centre, radius), keeping roughly the current viewing direction. */
	flyTo(center: [number, number, number], radius: number): void {
		const r = Math.max(radius, this.bounds.radius * 0.06);
		const dist = (r / Math.sin((this.camera.fov * Math.PI) / 360)) * 1.8;
		const target = new Vector3(...center);
		// Look from outside: mostly along the ray from the part's centre through the item, a little
		// of the current direction so the move stays readable.
		const current = this.camera.position.clone().sub(this.controls.target).normalize();
		const radial = target.clone().sub(this.bounds.center);
		const dir = radial.lengthSq() > (0.05 * this.bounds.radius) ** 2 ? radial.normalize().addScaledVector(current, 0.35).normalize() : current;
		this.moveTo(target.clone().addScaledVector(dir, dist), target, true);
	}

	private moveTo(pos: Vector3, target: Vector3, animate: boolean): void {
		if (!animate) {
			this.camera.position.copy(pos);
			this.controls.target.copy(target);
			this.controls.update();
		} else this.anim = { from: this.camera.position.clone(), to: pos, fromT: this.controls.target.clone(), toT: target, t0: performance.now() };
		this.onChange();
	}

	position(): [number, number, number] {
		return [this.camera.position.x, this.camera.position.y, this.camera.position.z];
	}
	target(): [number, number, number] {
		return [this.controls.target.x, this.controls.target.y, this.controls.target.z];
	}

	dispose(): void {
		this.controls.dispose();
	}
}
