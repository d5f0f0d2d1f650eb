/**
 * Defect palette and marker shapes of the viewer. Each kind pairs a colour with a distinct line
 * pattern and marker shape, so no kind is told apart by hue alone.
 *
 * Colour choice: hues spread around the wheel and, more importantly, apart in lightness (CIE L*
 * in the table), following the separation advice of Okabe & Ito, "Color Universal Design" (2002):
 * under deuteranopia and protanopia the red–green axis collapses, so the pairs that would merge
 * (amber/rose, lime/sky) differ in L* by 15 or more and by shape. Blue–yellow contrast survives
 * both conditions. L* values are approximate (computed by hand from sRGB, D65; from memory of the
 * formula, not a tool). All colours are picked to read on the dark ink background and against the
 * neutral grey-blue mesh.
 */

export type OverlayKind =
	| 'holes'
	| 'nonManifoldEdges'
	| 'nonManifoldVertices'
	| 'selfIntersections'
	| 'shortEdges'
	| 'degenerateFaces'
	| 'flippedFaces'
	| 'floatingShells';

export type MarkerShape = 'ring' | 'diamond' | 'double-diamond' | 'cross' | 'tick' | 'hatched-square' | 'checker-square' | 'dotted-circle' | 'reticle';

export interface KindStyle {
	label: string;
	colour: string;
	/** Approximate CIE L* of the colour. */
	lightness: number;
	line: string;
	marker: MarkerShape;
}

export const KIND_ORDER: OverlayKind[] = [
	'holes',
	'nonManifoldEdges',
	'nonManifoldVertices',
	'selfIntersections',
	'shortEdges',
	'degenerateFaces',
	'flippedFaces',
	'floatingShells'
];

export const KIND_STYLE: Record<OverlayKind, KindStyle> = {
	holes: { label: 'Holes', colour: '#f5a524', lightness: 74, line: 'thick dashed loop', marker: 'ring' },
	nonManifoldEdges: { label: 'Non-manifold edges', colour: '#e0457b', lightness: 53, line: 'double line (cased)', marker: 'diamond' },
	nonManifoldVertices: { label: 'Non-manifold vertices', colour: '#ff8fb8', lightness: 72, line: 'none', marker: 'double-diamond' },
	selfIntersections: { label: 'Self-intersections', colour: '#4cc3ff', lightness: 74, line: 'diagonal hatch on both faces', marker: 'cross' },
	shortEdges: { label: 'Short edges', colour: '#e4f05a', lightness: 92, line: 'thick solid', marker: 'tick' },
	degenerateFaces: { label: 'Degenerate faces', colour: '#b48cff', lightness: 65, line: 'none (zero area)', marker: 'hatched-square' },
	flippedFaces: { label: 'Flipped faces', colour: '#2f6bff', lightness: 48, line: 'checker tint', marker: 'checker-square' },
	floatingShells: { label: 'Floating shells', colour: '#f2efe6', lightness: 95, line: 'dotted box outline + light tint', marker: 'dotted-circle' }
};

/** Qualitative shell colours: alternate light and dark so neighbours differ in lightness. */
export const SHELL_COLOURS = ['#9fb3c8', '#c99a6b', '#6e8fb0', '#d7c58a', '#8a7fb8', '#b7d1a6', '#a06f7f', '#7fb8b0'];

/**
 * Deviation ramp: five stops of viridis (van der Walt & Smith, matplotlib 2015), a published
 * perceptually uniform map that stays ordered under the common colour-vision deficiencies.
 */
export const DEVIATION_RAMP = ['#440154', '#3b528b', '#21918c', '#5ec962', '#fde725'];

/** RGB 0..1 of a ramp position t ∈ [0, 1], written into out at offset o. */
export function rampColour(t: number, out: Float32Array | number[], o: number): void {
	const n = DEVIATION_RAMP.length - 1;
	const x = Math.min(1, Math.max(0, Number.isFinite(t) ? t : 0)) * n;
	const i = Math.min(n - 1, Math.floor(x));
	const f = x - i;
	const a = hexRgb(DEVIATION_RAMP[i]), b = hexRgb(DEVIATION_RAMP[i + 1]);
	out[o] = a[0] + (b[0] - a[0]) * f;
	out[o + 1] = a[1] + (b[1] - a[1]) * f;
	out[o + 2] = a[2] + (b[2] - a[2]) * f;
}

export function hexRgb(hex: string): [number, number, number] {
	const v = parseInt(hex.slice(1), 16);
	return [((v >> 16) & 255) / 255, ((v >> 8) & 255) / 255, (v & 255) / 255];
}

/**
 * Draws a marker shape, white on a dark casing, into a square 2D context of side s. The material
 * tints white to the kind's colour; the dark casing keeps the shape readable on light surfaces.
 */
export function drawMarker(ctx: CanvasRenderingContext2D, shape: MarkerShape, s: number): void {
	ctx.clearRect(0, 0, s, s);
	const c = s / 2;
	const r = s * 0.34;
	ctx.lineCap = 'round';
	ctx.lineJoin = 'round';
	const both = (path: () => void, width: number, fill = false) => {
		ctx.strokeStyle = 'rgba(8,12,16,0.95)';
		ctx.lineWidth = width + s * 0.09;
		path();
		ctx.stroke();
		if (fill) {
			ctx.fillStyle = 'rgba(8,12,16,0.95)';
			ctx.fill();
		}
		ctx.strokeStyle = '#ffffff';
		ctx.lineWidth = width;
		path();
		ctx.stroke();
	};
	const w = s * 0.085;
	switch (shape) {
		case 'ring':
			both(() => (ctx.beginPath(), ctx.arc(c, c, r, 0, Math.PI * 2)), w * 1.3);
			break;
		case 'diamond':
			both(() => (ctx.beginPath(), ctx.moveTo(c, c - r), ctx.lineTo(c + r, c), ctx.lineTo(c, c + r), ctx.lineTo(c - r, c), ctx.closePath()), w, true);
			ctx.fillStyle = '#ffffff';
			ctx.beginPath();
			ctx.arc(c, c, s * 0.07, 0, Math.PI * 2);
			ctx.fill();
			break;
		case 'double-diamond':
			both(() => (ctx.beginPath(), ctx.moveTo(c, c - r), ctx.lineTo(c + r, c), ctx.lineTo(c, c + r), ctx.lineTo(c - r, c), ctx.closePath()), w * 0.8);
			both(() => (ctx.beginPath(), ctx.moveTo(c, c - r * 0.5), ctx.lineTo(c + r * 0.5, c), ctx.lineTo(c, c + r * 0.5), ctx.lineTo(c - r * 0.5, c), ctx.closePath()), w * 0.8);
			break;
		case 'cross':
			both(() => (ctx.beginPath(), ctx.moveTo(c - r, c - r), ctx.lineTo(c + r, c + r), ctx.moveTo(c + r, c - r), ctx.lineTo(c - r, c + r)), w * 1.4);
			break;
		case 'tick':
			// An I-beam: a short bar with end ticks, like a dimension mark for a length.
			both(() => (ctx.beginPath(), ctx.moveTo(c, c - r), ctx.lineTo(c, c + r), ctx.moveTo(c - r * 0.6, c - r), ctx.lineTo(c + r * 0.6, c - r), ctx.moveTo(c - r * 0.6, c + r), ctx.lineTo(c + r * 0.6, c + r)), w * 1.2);
			break;
		case 'hatched-square':
			both(() => (ctx.beginPath(), ctx.rect(c - r, c - r, 2 * r, 2 * r)), w);
			ctx.save();
			ctx.beginPath();
			ctx.rect(c - r, c - r, 2 * r, 2 * r);
			ctx.clip();
			ctx.strokeStyle = '#ffffff';
			ctx.lineWidth = w * 0.6;
			for (let k = -2; k <= 2; k++) {
				ctx.beginPath();
				ctx.moveTo(c - r + k * r * 0.6, c + r);
				ctx.lineTo(c + r + k * r * 0.6, c - r);
				ctx.stroke();
			}
			ctx.restore();
			break;
		case 'checker-square': {
			both(() => (ctx.beginPath(), ctx.rect(c - r, c - r, 2 * r, 2 * r)), w);
			ctx.fillStyle = '#ffffff';
			const q = r / 2;
			for (let i = 0; i < 4; i++) for (let j = 0; j < 4; j++) if ((i + j) % 2 === 0) ctx.fillRect(c - r + i * q, c - r + j * q, q, q);
			break;
		}
		case 'dotted-circle':
			ctx.setLineDash([s * 0.04, s * 0.09]);
			both(() => (ctx.beginPath(), ctx.arc(c, c, r, 0, Math.PI * 2)), w * 1.2);
			ctx.setLineDash([]);
			break;
		case 'reticle':
			both(() => (ctx.beginPath(), ctx.arc(c, c, s * 0.42, 0, Math.PI * 2)), w * 0.7);
			both(
				() => (
					ctx.beginPath(),
					ctx.moveTo(c, 0),
					ctx.lineTo(c, s * 0.2),
					ctx.moveTo(c, s),
					ctx.lineTo(c, s * 0.8),
					ctx.moveTo(0, c),
					ctx.lineTo(s * 0.2, c),
					ctx.moveTo(s, c),
					ctx.lineTo(s * 0.8, c)
				),
				w * 0.7
			);
			break;
	}
}
