/**
 * The viewer's WebGL renderer in its container: canvas, size and pixel ratio, on-demand frames (one
 * requestAnimationFrame at most, never an idle loop: nothing redraws while nothing changes) and the
 * frame-time record. What a frame draws is the owner's `draw` callback.
 */
import { Color, Vector2, WebGLRenderer } from 'three';
import { BACKGROUND_COLOUR } from '../palette';

/** GPU objects one renderer holds (renderer.info.memory). */
export interface GpuMemory {
	geometries: number;
	textures: number;
}

/** Frame-time statistics in milliseconds over the last renders. */
export interface FrameStats {
	frames: number;
	lastMs: number;
	meanMs: number;
	p95Ms: number;
	maxMs: number;
}

export class RendererHost {
	readonly renderer: WebGLRenderer;
	/** Pixel ratio at rest; moving frames may be drawn at a share of it (setMovingResolution). */
	readonly restRatio: number;
	private frameTimes: number[] = [];
	private pending = false;
	private disposed = false;
	private resizeObserver: ResizeObserver;

	/** draw(finish): one frame; finish = wait for the GPU before returning. onResize runs before the frame a resize asks for. */
	constructor(
		private container: HTMLElement,
		private draw: (finish: boolean) => void,
		onResize: () => void
	) {
		this.renderer = new WebGLRenderer({ antialias: false, preserveDrawingBuffer: true, powerPreference: 'high-performance' });
		this.restRatio = Math.min(window.devicePixelRatio, 2);
		this.renderer.setPixelRatio(this.restRatio);
		this.renderer.setClearColor(new Color(BACKGROUND_COLOUR));
		this.renderer.localClippingEnabled = false;
		this.renderer.autoClear = false;
		container.appendChild(this.renderer.domElement);
		this.renderer.domElement.style.display = 'block';
		this.resizeObserver = new ResizeObserver(() => {
			this.renderer.setSize(this.width, this.height);
			onResize();
			this.requestRender();
		});
		this.resizeObserver.observe(container);
		this.renderer.setSize(this.width, this.height);
	}

	/** Container size in CSS pixels (at least 1 × 1). */
	get width(): number {
		return Math.max(1, this.container.clientWidth);
	}
	get height(): number {
		return Math.max(1, this.container.clientHeight);
	}

	/** Drawing-buffer share of the resting resolution (1 at rest); software rasterisers pay per pixel. */
	setResolution(share: number): void {
		const ratio = this.restRatio * share;
		if (this.renderer.getPixelRatio() !== ratio) this.renderer.setPixelRatio(ratio);
	}

	/** Size the frame is drawn at, CSS pixels. */
	size(): Vector2 {
		return this.renderer.getSize(new Vector2());
	}

	requestRender(): void {
		if (this.pending || this.disposed) return;
		this.pending = true;
		requestAnimationFrame(() => {
			this.pending = false;
			if (!this.disposed) this.renderNow();
		});
	}

	/** One frame now; returns its duration (CPU side; with finish = true also waited for on the GPU). */
	renderNow(finish = false): number {
		const t0 = performance.now();
		this.draw(finish);
		if (finish) this.finish();
		const ms = performance.now() - t0;
		this.frameTimes.push(ms);
		if (this.frameTimes.length > 240) this.frameTimes.shift();
		return ms;
	}

	/** Waits until the GPU has done everything asked of it (a one-pixel read). */
	finish(): void {
		const gl = this.renderer.getContext();
		gl.readPixels(0, 0, 1, 1, gl.RGBA, gl.UNSIGNED_BYTE, new Uint8Array(4));
	}

	resetFrameTimes(): void {
		this.frameTimes = [];
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

	gpuMemory(): GpuMemory {
		const m = this.renderer.info.memory;
		return { geometries: m.geometries, textures: m.textures };
	}

	get isDisposed(): boolean {
		return this.disposed;
	}

	/** Stops the frames and frees the context; the layers free their own objects first. */
	dispose(): void {
		this.disposed = true;
		this.resizeObserver.disconnect();
		this.renderer.dispose();
		this.renderer.forceContextLoss();
		this.renderer.domElement.remove();
	}
}
