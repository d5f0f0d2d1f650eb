/**
 * Comment pins: numbered sprites at picked points, drawn over the part. Owns its sprites and their
 * textures; setPins replaces them all, dispose() frees them.
 */
import { CanvasTexture, Group, Sprite, SpriteMaterial, Vector3, type Camera } from 'three';

export interface PinInput {
	id: string;
	point: [number, number, number];
	number: number;
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

export class PinLayer {
	readonly group = new Group();
	private pins: { id: string; sprite: Sprite; point: Vector3 }[] = [];

	setPins(pins: PinInput[]): void {
		this.clear();
		this.pins = pins.map((p) => {
			const sprite = pinSprite(p.number);
			sprite.position.set(...p.point);
			this.group.add(sprite);
			return { id: p.id, sprite, point: new Vector3(...p.point) };
		});
	}

	/** Pin within 14 px of a client-space point; widthShare is the part of the canvas the view takes (½ side by side). */
	pick(camera: Camera, rect: DOMRect, clientX: number, clientY: number, widthShare: number): string | null {
		let best: string | null = null, bestD = 14;
		const v = new Vector3();
		for (const p of this.pins) {
			v.copy(p.point).project(camera);
			if (v.z > 1) continue;
			const x = rect.left + ((v.x + 1) / 2) * rect.width * widthShare;
			const y = rect.top + ((1 - v.y) / 2) * rect.height;
			const d = Math.hypot(x - clientX, y - clientY);
			if (d < bestD) (bestD = d), (best = p.id);
		}
		return best;
	}

	private clear(): void {
		for (const p of this.pins) {
			this.group.remove(p.sprite);
			p.sprite.material.map?.dispose();
			p.sprite.material.dispose();
		}
		this.pins = [];
	}

	dispose(): void {
		this.clear();
		this.group.removeFromParent();
	}
}
