// Face quality as people read it: four classes of the radius ratio 2r/R, tied to the gate's own
// sliver threshold (tolerances.sliverQuality, what the sliver-cluster hint counts), instead of the
// report's raw equal-width bins.
import type { Histogram } from './mesh/report';

export type QualityClass = 'good' | 'fair' | 'poor' | 'sliver';

export interface QualityClassCount {
	kind: QualityClass;
	/** Lower and upper bound of 2r/R; the upper bound of `good` is 1 and included. */
	from: number;
	to: number;
	faces: number;
	/** Share of all faces, 0 … 1. */
	share: number;
	/** What the class means for the mesher, in plain words. */
	meaning: string;
}

/** Bounds above the sliver threshold, our own choice (no source): fair from 0.3, good from 0.6. */
export const FAIR_FROM = 0.3;
export const GOOD_FROM = 0.6;

const MEANING: Record<QualityClass, string> = {
	good: 'near-equilateral; meshes cleanly',
	fair: 'stretched, usually harmless',
	poor: 'long and thin; can spoil the cells next to it',
	sliver: 'below the sliver threshold: a needle or a flattened face'
};

/**
 * Counts the faces of a quality histogram (linear bins on [0, 1]) into the four classes. A bin goes
 * to the class its middle falls in, so the classes are exact when their bounds lie on bin
 * boundaries (0.05, 0.3, 0.6 do for the report's 20 bins) and within one bin otherwise.
 */
export function qualityClasses(h: Histogram, sliverQuality: number): QualityClassCount[] {
	const bounds: [QualityClass, number, number][] = [
		['good', GOOD_FROM, 1],
		['fair', FAIR_FROM, GOOD_FROM],
		['poor', sliverQuality, FAIR_FROM],
		['sliver', 0, sliverQuality]
	];
	const total = h.counts.reduce((a, b) => a + b, 0);
	const faces = new Map<QualityClass, number>(bounds.map(([k]) => [k, 0]));
	for (let i = 0; i < h.counts.length; i++) {
		const mid = (h.bins[i] + h.bins[i + 1]) / 2;
		const k = mid < sliverQuality ? 'sliver' : mid < FAIR_FROM ? 'poor' : mid < GOOD_FROM ? 'fair' : 'good';
		faces.set(k, faces.get(k)! + h.counts[i]);
	}
	return bounds.map(([kind, from, to]) => ({ kind, from, to, faces: faces.get(kind)!, share: total ? faces.get(kind)! / total : 0, meaning: MEANING[kind] }));
}
