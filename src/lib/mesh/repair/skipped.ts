/**
 * What the steps of a recipe left alone, each with why, in plain words (never a bare "nothing to
 * do"), and the scale factor of a recipe's rescale steps.
 */
import { fmtNumber } from '../../format';
import type { RepairLogEntry, RepairStep } from './recipe';
import type { FillHoleCounts, HoleLeftReason } from './fill-holes';
import type { OrientCounts } from './orient';
import type { CollapseCounts } from './collapse-short-edges';

const fmt = (x: number) => fmtNumber(x);

const HOLE_WHY: Record<HoleLeftReason, (p: Record<string, number | string>) => string> = {
	'perimeter-too-long': (p) => `above the ${fmt(Number(p.maxPerimeter))} limit`,
	'too-many-edges': (p) => `more than ${p.maxEdges ?? 200} edges`,
	'open-chain': () => 'the rim is not a closed loop (it runs through a non-manifold edge)',
	'no-valid-triangulation': () => 'no patch could be found that does not fold over itself',
	'patch-intersects-mesh': () => 'every patch found would cut through the rest of the surface'
};

/** One line per item a step left alone, with why. At most `max` lines per step. */
export function skippedItems(log: RepairLogEntry[], max = 20): string[] {
	const out: string[] = [];
	for (const e of log) {
		if (e.op === 'fill-holes') {
			const c = e.counts as FillHoleCounts;
			const left = c.holesLeft ?? [];
			for (const h of left.slice(0, max)) out.push(`hole ${fmt(h.perimeter)} around (${h.edgeCount} edges) skipped: ${HOLE_WHY[h.reason]?.(e.params) ?? h.reason}`);
			if (left.length > max) out.push(`${left.length - max} more holes skipped`);
		} else if (e.op === 'orient') {
			const c = e.counts as OrientCounts;
			if (c.nonOrientableShells > 0) {
				out.push(
					`${c.nonOrientableShells === 1 ? 'a shell' : `${c.nonOrientableShells} shells`} not oriented: ${c.nonOrientableShells === 1 ? 'it is' : 'they are'} non-orientable (one-sided, like a Möbius strip), so no choice of face winding can make ${c.nonOrientableShells === 1 ? 'it' : 'them'} consistent; the shape itself must be remodelled`
				);
			}
		} else if (e.op === 'collapse-short-edges') {
			const s = (e.counts as CollapseCounts).skipped;
			const parts = [
				s?.boundaryOrNonManifold ? `${s.boundaryOrNonManifold} on a boundary or non-manifold edge` : '',
				s?.linkCondition ? `${s.linkCondition} would have joined two sheets (link condition)` : '',
				s?.normalFlip ? `${s.normalFlip} would have flipped a face` : '',
				s?.degenerateFace ? `${s.degenerateFace} would have left a degenerate face` : ''
			].filter(Boolean);
			if (parts.length) out.push(`short edges left: ${parts.join(', ')}`);
		}
	}
	return out;
}

/** Product of the factors of the recipe's rescale steps (1 when there are none). */
export function recipeScaleFactor(steps: RepairStep[]): number {
	let f = 1;
	for (const s of steps as unknown as { op: string; factor?: number }[]) if (s.op === 'rescale' && typeof s.factor === 'number' && s.factor > 0) f *= s.factor;
	return f;
}
