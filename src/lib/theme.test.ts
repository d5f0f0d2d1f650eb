// Contrast of both colour themes (WCAG 2 contrast ratio: relative luminance of sRGB, (L1 + 0.05) /
// (L2 + 0.05)). Reads the colours from src/app.css, and Tailwind's own palette (oklch, converted by
// the OKLab matrices) for the shades app.css does not set. Text needs 4.5 : 1 (WCAG AA for body
// text), the focus ring 3 : 1 (AA for non-text contrast).
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';

const css = readFileSync('src/app.css', 'utf8');
const tw = readFileSync('node_modules/tailwindcss/theme.css', 'utf8');

function block(src: string, opener: string): string {
	const i = src.indexOf(opener);
	if (i < 0) throw new Error(`no ${opener} in app.css`);
	return src.slice(i, src.indexOf('}', i));
}
function vars(text: string): Map<string, string> {
	const m = new Map<string, string>();
	for (const [, name, value] of text.matchAll(/--color-([a-z]+-\d+):\s*([^;]+);/g)) m.set(name, value.trim());
	return m;
}

type Rgb = [number, number, number];
const toLinear = (c: number) => (c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4);
function parseColour(v: string): Rgb {
	const hex = /^#([0-9a-f]{6})$/i.exec(v);
	if (hex) return [0, 2, 4].map((i) => toLinear(parseInt(hex[1].slice(i, i + 2), 16) / 255)) as Rgb;
	const ok = /^oklch\(([\d.]+)%\s+([\d.]+)\s+([\d.]+)\)$/.exec(v);
	if (!ok) throw new Error(`cannot read colour ${v}`);
	const L = Number(ok[1]) / 100, C = Number(ok[2]), h = (Number(ok[3]) * Math.PI) / 180;
	const a = C * Math.cos(h), b = C * Math.sin(h);
	const l = (L + 0.3963377774 * a + 0.2158037573 * b) ** 3;
	const m = (L - 0.1055613458 * a - 0.0638541728 * b) ** 3;
	const s = (L - 0.0894841775 * a - 1.291485548 * b) ** 3;
	const clamp = (x: number) => Math.min(1, Math.max(0, x));
	return [clamp(4.0767416621 * l - 3.3077115913 * m + 0.2309699292 * s), clamp(-1.2684380046 * l + 2.6097574011 * m - 0.3413193965 * s), clamp(-0.0041960863 * l - 0.7034186147 * m + 1.707614701 * s)];
}
const luminance = ([r, g, b]: Rgb) => 0.2126 * r + 0.7152 * g + 0.0722 * b;
function contrast(a: Rgb, b: Rgb): number {
	const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x);
	return (hi + 0.05) / (lo + 0.05);
}

const palette = vars(tw);
const dark = new Map([...palette, ...vars(block(css, '@theme {'))]);
const light = new Map([...dark, ...vars(block(css, "html[data-theme='light'] {"))]);
const THEMES = { dark, light };

const TEXT = ['ink-100', 'ink-200', 'ink-300', 'ink-400', 'ink-500'];
const NOTICE = ['tide-100', 'tide-200', 'tide-300', 'rose-200', 'rose-300', 'amber-200', 'amber-300', 'orange-200', 'violet-200', 'sky-200', 'sky-300'];
/** [text, ground, least ratio, where] */
type Pair = [string, string, number, string];
const PAIRS: Pair[] = [
	...TEXT.flatMap((t): Pair[] => [
		[t, 'ink-950', 4.5, 'page'],
		[t, 'ink-900', 4.5, 'card']
	]),
	...NOTICE.map((t): Pair => [t, 'ink-900', 4.5, 'notice on a card']),
	['ink-100', 'ink-800', 4.5, 'button'],
	['ink-950', 'tide-600', 4.5, 'primary button'],
	['rose-100', 'rose-900', 4.5, 'danger button'],
	['tide-400', 'ink-950', 3, 'focus ring']
];

describe('theme contrast (WCAG 2 ratio)', () => {
	it('reads a known pair right: white on black is 21 : 1, #777 on white about 4.48 : 1', () => {
		expect(contrast(parseColour('#ffffff'), parseColour('#000000'))).toBeCloseTo(21, 6);
		expect(contrast(parseColour('#777777'), parseColour('#ffffff'))).toBeCloseTo(4.48, 2);
		// oklch(100% 0 0) is white.
		expect(contrast(parseColour('oklch(100% 0 0)'), parseColour('#000000'))).toBeCloseTo(21, 3);
	});
	for (const [theme, colours] of Object.entries(THEMES)) {
		it(`${theme} theme: every text and notice colour clears its ratio`, () => {
			const low: string[] = [];
			for (const [fg, bg, least, where] of PAIRS) {
				const a = colours.get(fg), b = colours.get(bg);
				if (!a || !b) throw new Error(`${theme}: ${fg} or ${bg} is not defined`);
				const r = contrast(parseColour(a), parseColour(b));
				if (r < least) low.push(`${fg} on ${bg} (${where}): ${r.toFixed(2)} < ${least}`);
			}
			expect(low).toEqual([]);
		});
	}
	it('the light theme sets every ink and tide shade the pages use', () => {
		const own = vars(block(css, "html[data-theme='light'] {"));
		for (const n of [950, 900, 850, 800, 700, 600, 500, 400, 300, 200, 100]) expect(own.has(`ink-${n}`), `ink-${n}`).toBe(true);
		for (const n of [700, 600, 500, 400, 300, 200, 100]) expect(own.has(`tide-${n}`), `tide-${n}`).toBe(true);
	});
});
