// How numbers are written wherever people read them: pages, mail and the gate's rule texts.
// Pure (no DOM, no SvelteKit), so the engine-side rule texts, the server and the pages share it.
//
// - Counts: grouped integers ("12,480").
// - Measures: 4 significant digits and always a unit. Between 0.001 and 1,000,000 of the project's
//   unit the value stays in that unit; outside that, metric units move to the nearest SI-prefixed
//   unit that gives a plain number ("0.1 mm" for 0.0001 m, "2.3 m²", "25,000 mm³"), and other units
//   get engineering notation ("3 × 10⁻⁶ in").
// - Round-off: given the part's size, a value smaller than what float32 coordinates (STL stores
//   float32) can resolve at that size is written 0, so "1.601e-15 m" becomes "0 m".
// - A limit and its finding, or the two ends of a range, are written in one unit: pick it with
//   displayUnit([limit, finding], …) and pass it to both.

export type Dim = 1 | 2 | 3;

/** Relative resolution of float32 coordinates (2⁻²³): anything below size × this is round-off. */
export const ROUND_OFF_REL = 2 ** -23;

const DIGITS = 4;
const SUP: Record<string, string> = { '-': '⁻', '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹' };
const POWER = ['', '', '²', '³'] as const;

/** Metres per unit for the units that take SI prefixes. */
const METRIC: Record<string, number> = { nm: 1e-9, 'µm': 1e-6, mm: 1e-3, cm: 1e-2, m: 1, km: 1e3 };
/** The prefixed units a metric value may move to, largest first (cm is not an engineering step). */
const LADDER = ['km', 'm', 'mm', 'µm', 'nm'] as const;

export interface DisplayUnit {
	/** Written after the number, e.g. "µm", "mm²". */
	label: string;
	/** Multiply a value in the project's unit by this to get it in the display unit. */
	factor: number;
}

export interface MeasureOptions {
	/** The part's size (e.g. bounding-box diagonal) in the project's unit, for the round-off test. */
	scale?: number | null;
	/**
	 * Write the value in this unit (e.g. its limit's) instead of choosing one from the value itself,
	 * as long as it reads plainly there (0.001 … 1,000,000); a value far off falls back to its own.
	 */
	unit?: DisplayUnit;
	digits?: number;
}

/**
 * A plain decimal (what String gives for 1e-6 ≤ |x| < 1e21) with its integer part grouped by
 * thousands, as toLocaleString('en-US', { maximumFractionDigits: 20 }) writes it, without the
 * Intl number formatter, whose first use in a process is a start-up cost the command line feels.
 * Any other value goes to toLocaleString.
 */
export function groupedDecimal(x: number): string {
	if (x === 0) return Object.is(x, -0) ? '-0' : '0';
	const a = Math.abs(x);
	const s = String(a);
	const dot = s.indexOf('.');
	if (!(a >= 1e-6 && a < 1e21) || (dot >= 0 && s.length - dot - 1 > 20)) return x.toLocaleString('en-US', { maximumFractionDigits: 20 });
	const int = dot < 0 ? s : s.slice(0, dot);
	let out = int.length > 3 ? groupThousands(int) : int;
	if (dot >= 0) out += s.slice(dot);
	return x < 0 ? `-${out}` : out;
}

function groupThousands(digits: string): string {
	let out = digits.slice(0, digits.length % 3 || 3);
	for (let i = out.length; i < digits.length; i += 3) out += `,${digits.slice(i, i + 3)}`;
	return out;
}

/** Grouped integer; "—" for a missing value. */
export function fmtCount(n: number | null | undefined): string {
	if (n == null || !Number.isFinite(n)) return '—';
	return groupedDecimal(Math.round(n));
}

/** "3 holes", "1 hole", "12,480 faces". */
export function plural(k: number, one: string, many = one + 's'): string {
	return `${fmtCount(k)} ${k === 1 ? one : many}`;
}

function superscript(e: number): string {
	return String(e)
		.split('')
		.map((c) => SUP[c])
		.join('');
}

/**
 * A bare number with `digits` significant digits: plain between 0.001 and 1,000,000, engineering
 * notation (exponent a multiple of 3) outside, e.g. "954 × 10⁻⁹". Trailing zeros are dropped.
 */
export function fmtNumber(x: number | null | undefined, digits = DIGITS): string {
	if (x == null || !Number.isFinite(x)) return '—';
	if (x === 0) return '0';
	const a = Math.abs(x);
	const r = Number(x.toPrecision(digits));
	if (Math.abs(r) >= 1e-3 && Math.abs(r) < 1e6) return groupedDecimal(r);
	let e = Math.floor(Math.log10(a) / 3) * 3;
	let m = Number((x / 10 ** e).toPrecision(digits));
	if (Math.abs(m) >= 1000) {
		e += 3;
		m = Number((x / 10 ** e).toPrecision(digits));
	}
	return `${groupedDecimal(m)} × 10${superscript(e)}`;
}

/** "mm²", "in³". */
export function unitLabel(unit: string, dim: Dim = 1): string {
	return unit + POWER[dim];
}

/** True when |x| is below what the part's coordinates can resolve at its size. */
export function isRoundOff(x: number, dim: Dim, scale: number | null | undefined): boolean {
	if (!scale || !(scale > 0) || !Number.isFinite(scale)) return false;
	return Math.abs(x) < scale ** dim * ROUND_OFF_REL;
}

const isPlain = (v: number) => {
	const r = Math.abs(Number(v.toPrecision(DIGITS)));
	return r >= 1e-3 && r < 1e6;
};

/**
 * The unit to write values of about `refs` (in `unit`) in: the project's unit when every one of them
 * reads plainly there (0.001 … 1,000,000), else the nearest SI-prefixed unit in which they all do,
 * else the one in which most do. Pass a limit and its finding together to write both in one unit;
 * values within round-off (they are written 0) do not count.
 */
export function displayUnit(refs: number | readonly (number | null | undefined)[], unit: string, dim: Dim = 1, opts: { scale?: number | null } = {}): DisplayUnit {
	const keep = { label: unitLabel(unit, dim), factor: 1 };
	const perUnit = METRIC[unit];
	const values = (typeof refs === 'number' ? [refs] : refs).filter((v): v is number => v != null && Number.isFinite(v) && v !== 0 && !isRoundOff(v, dim, opts.scale));
	if (!values.length || perUnit === undefined) return keep;
	const candidates = [unit, ...LADDER.filter((p) => p !== unit).sort((p, q) => Math.abs(Math.log(METRIC[p] / perUnit)) - Math.abs(Math.log(METRIC[q] / perUnit)) || METRIC[p] - METRIC[q])];
	let best = keep;
	let bestScore = -1;
	for (const p of candidates) {
		const factor = (perUnit / METRIC[p]) ** dim;
		const score = values.filter((v) => isPlain(v * factor)).length;
		if (score > bestScore) [best, bestScore] = [p === unit ? keep : { label: unitLabel(p, dim), factor }, score];
		if (score === values.length) break;
	}
	return best;
}

/** A length, area or volume in the project's unit, written with its unit. */
export function fmtMeasure(x: number | null | undefined, unit: string, dim: Dim, opts: MeasureOptions = {}): string {
	if (x == null || !Number.isFinite(x)) return '—';
	const du = opts.unit && (isPlain(x * opts.unit.factor) || isRoundOff(x, dim, opts.scale)) ? opts.unit : displayUnit(x, unit, dim, opts);
	if (x === 0 || isRoundOff(x, dim, opts.scale)) return `0 ${du.label}`;
	return `${fmtNumber(x * du.factor, opts.digits)} ${du.label}`;
}

export const fmtLength = (x: number | null | undefined, unit: string, opts: MeasureOptions = {}) => fmtMeasure(x, unit, 1, opts);
export const fmtArea = (x: number | null | undefined, unit: string, opts: MeasureOptions = {}) => fmtMeasure(x, unit, 2, opts);
export const fmtVolume = (x: number | null | undefined, unit: string, opts: MeasureOptions = {}) => fmtMeasure(x, unit, 3, opts);

/** A value in an already chosen display unit, without the unit (for table columns whose header names it). */
export function fmtIn(x: number | null | undefined, du: DisplayUnit, opts: { scale?: number | null; dim?: Dim; digits?: number } = {}): string {
	if (x == null || !Number.isFinite(x)) return '—';
	if (x === 0 || isRoundOff(x, opts.dim ?? 1, opts.scale)) return '0';
	return fmtNumber(x * du.factor, opts.digits);
}

/**
 * A point, all three coordinates in one unit chosen from the part's size (or the largest coordinate),
 * each to the same resolution: a coordinate below 10⁻⁴ of that size is 0. "(12.5, 0, -3.2) mm".
 */
export function fmtPoint(p: readonly number[], unit: string, opts: MeasureOptions = {}): string {
	const ref = opts.scale ?? Math.max(...p.map(Math.abs));
	const du = opts.unit ?? displayUnit(ref, unit, 1);
	const floor = ref * 1e-4;
	const one = (c: number) =>
		!Number.isFinite(c) ? '—' : Math.abs(c) < floor || c === 0 ? '0' : groupedDecimal(Number((c * du.factor).toPrecision(opts.digits ?? DIGITS)));
	return `(${p.map(one).join(', ')}) ${du.label}`;
}

/** A share or change in per cent, with a sign when asked: "+0.213 %", "12.5 %". */
export function fmtPercent(fraction: number | null | undefined, opts: { signed?: boolean; digits?: number } = {}): string {
	if (fraction == null || !Number.isFinite(fraction)) return '—';
	const p = fraction * 100;
	const s = fmtNumber(p, opts.digits ?? 3);
	return `${opts.signed && p > 0 ? '+' : ''}${s} %`;
}
