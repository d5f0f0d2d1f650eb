/**
 * Defect palette and marker shapes of the viewer. Each kind pairs a colour with a second cue that
 * no other kind shares: its own marker shape, and where it draws lines or fills faces, its own line
 * style (dashed, cased, solid, dotted) or face pattern (diagonal hatch, checker, tint).
 *
 * Colour choice, checked by palette.test.ts: under normal vision and under simulated protanopia,
 * deuteranopia and tritanopia (Machado, Oliveira & Fernandes 2009, severity 1.0, colour-vision.ts),
 * every two finding colours, and each finding colour against the mesh grey and the background,
 * differ by CIE76 ΔE*ab ≥ 20 and in lightness by ΔL* ≥ 5. The two dichromat-safe directions are
 * used: magenta/violet against green/lime (kept apart in red–green by tritans and in blue–yellow by
 * protans and deutans), and blue against amber. Within a direction, lightness keeps them apart
 * (L* in the table, normal vision, D65).
 *
 * Pairs at risk, closest first (ΔE76 at the time of writing; the test prints the current figures):
 * - protanopia: non-manifold vertices (green) / short edges (lime), 25.5; degenerate faces
 *   (violet) / flipped faces (indigo), 28.2, which also differ by face pattern versus marker only.
 * - deuteranopia: non-manifold vertices / short edges, 26.5; self-intersections (sky) / degenerate
 *   faces (violet), 27.9 — the pair that merged in the previous palette.
 * - tritanopia: non-manifold vertices / self-intersections, 24.5 (ΔL* only 6); short edges (lime)
 *   / floating shells (warm white), 24.7; holes (sand) / floating shells, 24.7.
 * - against the mesh grey: self-intersections (24.7 for tritans); degenerate faces differ from it
 *   in lightness by only 5.6 for tritans.
 * - closest in lightness: holes / short edges, ΔL* 5.0 for deutans; holes / self-intersections,
 *   5.1 for protans (they stay far apart in ΔE).
 * Hue alone never tells two kinds apart: the marker shapes and line styles do.
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

export type MarkerShape = 'ring' | 'diamond' | 'bowtie' | 'cross' | 'tick' | 'triangle' | 'checker-square' | 'corner-box' | 'reticle';

/** Line drawn along the finding, if any. */
export type LineStyle = 'dashed' | 'cased' | 'solid' | 'dotted';
/** Pattern on the finding's faces, if any. */
export type FacePattern = 'diagonal-hatch' | 'checker' | 'tint';

export interface KindStyle {
	label: string;
	colour: string;
	/** CIE L* of the colour (normal vision, D65), rounded; the test checks it. */
	lightness: number;
	/** Legend wording for the line and face cues. */
	line: string;
	stroke: LineStyle | null;
	pattern: FacePattern | null;
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
	holes: { label: 'Holes', colour: '#f1d19c', lightness: 85, line: 'thick dashed loop, ring at the centre', stroke: 'dashed', pattern: null, marker: 'ring' },
	nonManifoldEdges: { label: 'Non-manifold edges', colour: '#d2294a', lightness: 47, line: 'double line (cased), diamond at the middle', stroke: 'cased', pattern: null, marker: 'diamond' },
	nonManifoldVertices: { label: 'Non-manifold vertices', colour: '#00c900', lightness: 71, line: 'bow-tie marker only', stroke: null, pattern: null, marker: 'bowtie' },
	selfIntersections: { label: 'Self-intersections', colour: '#92bfff', lightness: 76, line: 'diagonal hatch on both faces, cross at the crossing', stroke: null, pattern: 'diagonal-hatch', marker: 'cross' },
	shortEdges: { label: 'Short edges', colour: '#b7ff31', lightness: 92, line: 'thick solid line, I-beam at the middle', stroke: 'solid', pattern: null, marker: 'tick' },
	degenerateFaces: { label: 'Degenerate faces', colour: '#bc5bf7', lightness: 57, line: 'triangle marker only (zero area)', stroke: null, pattern: null, marker: 'triangle' },
	flippedFaces: { label: 'Flipped faces', colour: '#6c1dff', lightness: 40, line: 'checker tint', stroke: null, pattern: 'checker', marker: 'checker-square' },
	floatingShells: { label: 'Floating shells', colour: '#fffdf8', lightness: 99, line: 'dotted box outline + light tint, corner brackets', stroke: 'dotted', pattern: 'tint', marker: 'corner-box' }
};

/** Mesh colour (front faces, plain mode) and the view background, for the palette checks. */
export const MESH_COLOUR = '#8e9cab';
export const BACKGROUND_COLOUR = '#0c1117';

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
		case 'bowtie':
			// Two triangles meeting at one point: two sheets sharing only a vertex.
			both(() => (ctx.beginPath(), ctx.moveTo(c, c), ctx.lineTo(c - r, c - r * 0.75), ctx.lineTo(c - r, c + r * 0.75), ctx.closePath(), ctx.moveTo(c, c), ctx.lineTo(c + r, c - r * 0.75), ctx.lineTo(c + r, c + r * 0.75), ctx.closePath()), w, true);
			ctx.fillStyle = '#ffffff';
			ctx.beginPath();
			ctx.arc(c, c, s * 0.08, 0, Math.PI * 2);
			ctx.fill();
			break;
		case 'cross':
			both(() => (ctx.beginPath(), ctx.moveTo(c - r, c - r), ctx.lineTo(c + r, c + r), ctx.moveTo(c + r, c - r), ctx.lineTo(c - r, c + r)), w * 1.4);
			break;
		case 'tick':
			// An I-beam: a short bar with end ticks, like a dimension mark for a length.
			both(() => (ctx.beginPath(), ctx.moveTo(c, c - r), ctx.lineTo(c, c + r), ctx.moveTo(c - r * 0.6, c - r), ctx.lineTo(c + r * 0.6, c - r), ctx.moveTo(c - r * 0.6, c + r), ctx.lineTo(c + r * 0.6, c + r)), w * 1.2);
			break;
		case 'triangle':
			// A hollow triangle, flattened: a face with (almost) no area.
			both(() => (ctx.beginPath(), ctx.moveTo(c - r, c + r * 0.55), ctx.lineTo(c + r, c + r * 0.55), ctx.lineTo(c + r * 0.15, c - r * 0.75), ctx.closePath()), w);
			break;
		case 'checker-square': {
			both(() => (ctx.beginPath(), ctx.rect(c - r, c - r, 2 * r, 2 * r)), w);
			ctx.fillStyle = '#ffffff';
			const q = r / 2;
			for (let i = 0; i < 4; i++) for (let j = 0; j < 4; j++) if ((i + j) % 2 === 0) ctx.fillRect(c - r + i * q, c - r + j * q, q, q);
			break;
		}
		case 'corner-box': {
			// Four corner brackets, like the dotted box drawn round a floating shell.
			const k = r * 0.55;
			both(() => {
				ctx.beginPath();
				for (const [sx, sy] of [[-1, -1], [1, -1], [1, 1], [-1, 1]]) {
					ctx.moveTo(c + sx * r, c + sy * (r - k));
					ctx.lineTo(c + sx * r, c + sy * r);
					ctx.lineTo(c + sx * (r - k), c + sy * r);
				}
			}, w * 1.2);
			break;
		}
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
