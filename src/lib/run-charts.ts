// The figures a run page draws, worked out from one row per revision: bars of a distribution, the
// topology timeline across iterations, and the filters a click on a bar or a point sets. Pure (no
// DOM, no database), shared by the server load and its tests.

export interface Bar {
	/** Half-open [lo, hi), except the last bar, which includes hi. For a discrete measure lo = hi = the value. */
	lo: number;
	hi: number;
	count: number;
}

export interface Distribution {
	/** The measure's key in the filter (?m=key&lo=…&hi=…, or ?key=value for a discrete one). */
	key: string;
	discrete: boolean;
	bars: Bar[];
	/** Revisions with a value / without one (unchecked, or undefined such as the volume of an open surface). */
	counted: number;
	missing: number;
}

/** One bar per value for a whole-number measure (genus, shells), at most `maxBars` of them; beyond that it is binned. */
export function distribution(key: string, values: (number | null | undefined)[], opts: { discrete?: boolean; bins?: number; maxBars?: number } = {}): Distribution {
	const xs = values.filter((v): v is number => v != null && Number.isFinite(v));
	const missing = values.length - xs.length;
	if (xs.length === 0) return { key, discrete: !!opts.discrete, bars: [], counted: 0, missing };
	let lo = Infinity, hi = -Infinity;
	for (const x of xs) {
		if (x < lo) lo = x;
		if (x > hi) hi = x;
	}
	if (opts.discrete && hi - lo + 1 <= (opts.maxBars ?? 24)) {
		const bars: Bar[] = [];
		for (let v = lo; v <= hi; v++) bars.push({ lo: v, hi: v, count: 0 });
		for (const x of xs) bars[Math.round(x) - lo].count++;
		return { key, discrete: true, bars, counted: xs.length, missing };
	}
	const n = lo === hi ? 1 : Math.max(1, Math.min(opts.bins ?? 12, xs.length));
	const w = (hi - lo) / n;
	const bars: Bar[] = Array.from({ length: n }, (_, i) => ({ lo: lo + i * w, hi: i === n - 1 ? hi : lo + (i + 1) * w, count: 0 }));
	for (const x of xs) bars[w > 0 ? Math.min(n - 1, Math.floor((x - lo) / w)) : 0].count++;
	return { key, discrete: false, bars, counted: xs.length, missing };
}

/** Whether x lies in bar [lo, hi) (the last bar of a distribution includes hi: pass last = true). */
export function inBar(x: number | null | undefined, lo: number, hi: number, last: boolean): boolean {
	if (x == null || !Number.isFinite(x)) return false;
	return x >= lo && (x < hi || (last && x <= hi) || lo === hi);
}

export interface TimelinePoint {
	iteration: number;
	revisionId: number;
	genus: number | null;
	shells: number | null;
	/** Genus or shell count differs from the previous checked iteration's. */
	changed: boolean;
	/** What changed, in words: "genus 0 → 1", "shells 1 → 2". */
	change: string | null;
}

/**
 * Genus and shell count per iteration, in iteration order, with the iterations where either changed
 * from the previous checked one marked. Unchecked iterations (null genus and shells) are kept but
 * never marked, and do not reset the comparison.
 */
export function topologyTimeline(rows: { iteration: number | null; revisionId: number; genus: number | null; shells: number | null }[]): TimelinePoint[] {
	const sorted = rows.filter((r) => r.iteration !== null).sort((a, b) => a.iteration! - b.iteration! || a.revisionId - b.revisionId);
	let prev: { genus: number | null; shells: number | null } | null = null;
	return sorted.map((r) => {
		const checked = r.genus !== null || r.shells !== null;
		const parts: string[] = [];
		if (checked && prev) {
			if (r.genus !== prev.genus) parts.push(`genus ${prev.genus ?? '—'} → ${r.genus ?? '—'}`);
			if (r.shells !== prev.shells) parts.push(`shells ${prev.shells ?? '—'} → ${r.shells ?? '—'}`);
		}
		if (checked) prev = { genus: r.genus, shells: r.shells };
		return { iteration: r.iteration!, revisionId: r.revisionId, genus: r.genus, shells: r.shells, changed: parts.length > 0, change: parts.length ? parts.join(', ') : null };
	});
}
