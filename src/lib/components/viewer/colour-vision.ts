/**
 * Colour arithmetic for checking the viewer palette: sRGB ↔ CIE L*a*b* (D65), the CIEDE2000
 * difference, and simulated dichromatic vision with the matrices of Machado, Oliveira & Fernandes,
 * "A Physiologically-based Model for Simulation of Color Vision Deficiency", IEEE TVCG 15(6), 2009.
 * Pure functions, no DOM: the palette test runs them in Node.
 */

export type Deficiency = 'protanopia' | 'deuteranopia' | 'tritanopia';
export type Vision = 'normal' | Deficiency;

export const DEFICIENCIES: Deficiency[] = ['protanopia', 'deuteranopia', 'tritanopia'];

/**
 * Severity 1.0 rows of the paper's table of simulation matrices (row-major, applied to linear
 * RGB), transcribed from the paper's table for severity 1.0.
 */
export const MACHADO_2009: Record<Deficiency, readonly number[]> = {
	protanopia: [0.152286, 1.052583, -0.204868, 0.114503, 0.786281, 0.099216, -0.003882, -0.048116, 1.051998],
	deuteranopia: [0.367322, 0.860646, -0.227968, 0.280085, 0.672501, 0.047413, -0.01182, 0.04294, 0.968881],
	tritanopia: [1.255528, -0.076749, -0.178779, -0.078411, 0.930809, 0.147602, 0.004733, 0.691367, 0.3039]
};

export type Rgb = [number, number, number];
export type Lab = [number, number, number];

export function hexToRgb(hex: string): Rgb {
	const v = parseInt(hex.slice(1), 16);
	return [((v >> 16) & 255) / 255, ((v >> 8) & 255) / 255, (v & 255) / 255];
}

const toLinear = (c: number) => (c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4);

/** Linear RGB (0..1) of an sRGB colour as seen with the given vision; out-of-gamut results are clipped. */
export function simulateLinear(rgb: Rgb, vision: Vision): Rgb {
	const l: Rgb = [toLinear(rgb[0]), toLinear(rgb[1]), toLinear(rgb[2])];
	if (vision === 'normal') return l;
	const m = MACHADO_2009[vision];
	const clip = (x: number) => Math.min(1, Math.max(0, x));
	return [clip(m[0] * l[0] + m[1] * l[1] + m[2] * l[2]), clip(m[3] * l[0] + m[4] * l[1] + m[5] * l[2]), clip(m[6] * l[0] + m[7] * l[1] + m[8] * l[2])];
}

/** CIE L*a*b* (D65 white) of linear sRGB. */
export function linearToLab(l: Rgb): Lab {
	const x = (0.4124564 * l[0] + 0.3575761 * l[1] + 0.1804375 * l[2]) / 0.95047;
	const y = 0.2126729 * l[0] + 0.7151522 * l[1] + 0.072175 * l[2];
	const z = (0.0193339 * l[0] + 0.119192 * l[1] + 0.9503041 * l[2]) / 1.08883;
	const f = (t: number) => (t > 216 / 24389 ? Math.cbrt(t) : (24389 / 27 * t + 16) / 116);
	const fx = f(x), fy = f(y), fz = f(z);
	return [116 * fy - 16, 500 * (fx - fy), 200 * (fy - fz)];
}

/** L*a*b* of a hex colour as seen with the given vision. */
export function labOf(hex: string, vision: Vision = 'normal'): Lab {
	return linearToLab(simulateLinear(hexToRgb(hex), vision));
}

/** CIE76: Euclidean distance in L*a*b*. */
export function deltaE76(a: Lab, b: Lab): number {
	return Math.hypot(a[0] - b[0], a[1] - b[1], a[2] - b[2]);
}

/**
 * CIEDE2000 (kL = kC = kH = 1), as written out by Sharma, Wu & Dalal, "The CIEDE2000
 * Color-Difference Formula: Implementation Notes", Color Res. Appl. 30(1), 2005.
 */
export function deltaE2000(lab1: Lab, lab2: Lab): number {
	const [L1, a1, b1] = lab1, [L2, a2, b2] = lab2;
	const rad = Math.PI / 180;
	const C1 = Math.hypot(a1, b1), C2 = Math.hypot(a2, b2);
	const Cm = (C1 + C2) / 2;
	const G = 0.5 * (1 - Math.sqrt(Cm ** 7 / (Cm ** 7 + 25 ** 7)));
	const a1p = (1 + G) * a1, a2p = (1 + G) * a2;
	const C1p = Math.hypot(a1p, b1), C2p = Math.hypot(a2p, b2);
	const hue = (b: number, a: number) => (b === 0 && a === 0 ? 0 : ((Math.atan2(b, a) / rad) + 360) % 360);
	const h1p = hue(b1, a1p), h2p = hue(b2, a2p);
	const dLp = L2 - L1, dCp = C2p - C1p;
	let dhp = 0;
	if (C1p * C2p !== 0) {
		dhp = h2p - h1p;
		if (dhp > 180) dhp -= 360;
		else if (dhp < -180) dhp += 360;
	}
	const dHp = 2 * Math.sqrt(C1p * C2p) * Math.sin((dhp * rad) / 2);
	const Lpm = (L1 + L2) / 2, Cpm = (C1p + C2p) / 2;
	let hpm = h1p + h2p;
	if (C1p * C2p !== 0) {
		if (Math.abs(h1p - h2p) <= 180) hpm = (h1p + h2p) / 2;
		else hpm = h1p + h2p < 360 ? (h1p + h2p + 360) / 2 : (h1p + h2p - 360) / 2;
	}
	const T = 1 - 0.17 * Math.cos((hpm - 30) * rad) + 0.24 * Math.cos(2 * hpm * rad) + 0.32 * Math.cos((3 * hpm + 6) * rad) - 0.2 * Math.cos((4 * hpm - 63) * rad);
	const dTheta = 30 * Math.exp(-(((hpm - 275) / 25) ** 2));
	const Rc = 2 * Math.sqrt(Cpm ** 7 / (Cpm ** 7 + 25 ** 7));
	const Sl = 1 + (0.015 * (Lpm - 50) ** 2) / Math.sqrt(20 + (Lpm - 50) ** 2);
	const Sc = 1 + 0.045 * Cpm;
	const Sh = 1 + 0.015 * Cpm * T;
	const Rt = -Math.sin(2 * dTheta * rad) * Rc;
	return Math.sqrt((dLp / Sl) ** 2 + (dCp / Sc) ** 2 + (dHp / Sh) ** 2 + Rt * (dCp / Sc) * (dHp / Sh));
}
