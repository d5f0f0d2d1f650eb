/**
 * How much a repair changed a mesh, and whether each change is within the project's repair limits.
 * Pure functions (no database): the engine thread measures, the check job and sign-off judge.
 */
import { displayUnit, fmtCount, fmtLength, fmtNumber, isRoundOff } from '../../format';
import { faceCross, faceVolume6 } from './common';
import { buildEdges } from '../edges';
import type { MeshBuffers } from '../types';

/** Surface area, and the enclosed volume where it is defined (every edge used exactly once each way). */
export function areaAndVolume(mesh: MeshBuffers): { area: number; volume: number | null } {
	const p = mesh.positions, ix = mesh.indices;
	const triCount = ix.length / 3;
	const c = new Float64Array(3);
	let area = 0, vol6 = 0;
	for (let t = 0; t < triCount; t++) {
		faceCross(p, ix, t, c);
		area += 0.5 * Math.hypot(c[0], c[1], c[2]);
		vol6 += faceVolume6(p, ix, t, 0, 0, 0);
	}
	if (triCount === 0) return { area, volume: null };
	const { edgeCount, edgeStart, heSorted } = buildEdges(ix, p.length / 3);
	for (let e = 0; e < edgeCount; e++) {
		const s = edgeStart[e];
		if (edgeStart[e + 1] - s !== 2) return { area, volume: null };
		// Consistent orientation: the two halfedges of an edge start at different vertices.
		if (ix[heSorted[s]] === ix[heSorted[s + 1]]) return { area, volume: null };
	}
	return { area, volume: vol6 / 6 };
}

/** True when the two meshes are the same bytes: same vertices in the same order, same faces. */
export function sameMesh(a: MeshBuffers, b: MeshBuffers): boolean {
	if (a.positions.length !== b.positions.length || a.indices.length !== b.indices.length) return false;
	for (let i = 0; i < a.indices.length; i++) if (a.indices[i] !== b.indices[i]) return false;
	for (let i = 0; i < a.positions.length; i++) if (a.positions[i] !== b.positions[i]) return false;
	return true;
}

/** What the engine stores about a repair's change (in the revision's repair log). */
export interface ChangeMeasures {
	facesBefore: number;
	facesAfter: number;
	areaBefore: number;
	areaAfter: number;
	volumeBefore: number | null;
	volumeAfter: number | null;
	/** Largest distance between the two surfaces (symmetric Hausdorff), model units; with a rescale, measured after undoing it. */
	deviation: number;
	/** Product of the factors of the recipe's rescale steps (1 when there are none). */
	scaleFactor?: number;
}

export interface RepairLimits {
	maxVolumeChangePercent: number;
	maxAreaChangePercent: number;
	maxFaceChangePercent: number;
	maxDeviation: { mode: 'absolute' | 'fraction-of-cell'; value: number };
}

export interface LimitLine {
	measure: 'volume' | 'area' | 'faces' | 'deviation';
	/** Measured value (percent for the changes, project units for deviation); null when not comparable. */
	measured: number | null;
	limit: number;
	within: boolean | null;
	text: string;
}

export interface LimitJudgement {
	within: boolean;
	lines: LimitLine[];
	/** Plain words: every measure outside its limit, or '' when all are within. */
	reason: string;
}

const pct = (after: number, before: number) => (before === 0 ? (after === 0 ? 0 : Infinity) : (100 * (after - before)) / Math.abs(before));
const fmt = (x: number) => fmtNumber(x);
const sgn = (x: number) => (x > 0 ? '+' : '') + fmt(x);

/**
 * Judges a repair's change against the limits. With a rescale by F in the recipe, the expected
 * volume is F³·V and the expected area F²·A (so a rescale alone is no change); the deviation is
 * measured by the engine after undoing the scale (result ÷ F against the original). Volume may be null (open mesh): then the other
 * measures decide and the volume line says it was not comparable.
 */
export function judgeRepair(m: ChangeMeasures, limits: RepairLimits, targetCellSize: number, units = ''): LimitJudgement {
	const f = m.scaleFactor && m.scaleFactor > 0 ? m.scaleFactor : 1;
	const lines: LimitLine[] = [];
	if (m.volumeBefore === null || m.volumeAfter === null || m.volumeBefore === 0) {
		lines.push({ measure: 'volume', measured: null, limit: limits.maxVolumeChangePercent, within: null, text: `volume not comparable (${m.volumeBefore === null ? 'the original' : 'the result'} is not a closed, consistently oriented surface)` });
	} else {
		const d = pct(m.volumeAfter, f ** 3 * m.volumeBefore);
		const ok = Math.abs(d) <= limits.maxVolumeChangePercent;
		lines.push({ measure: 'volume', measured: d, limit: limits.maxVolumeChangePercent, within: ok, text: `volume ${sgn(d)} % against a limit of ±${fmt(limits.maxVolumeChangePercent)} %` });
	}
	const a = pct(m.areaAfter, f ** 2 * m.areaBefore);
	lines.push({ measure: 'area', measured: a, limit: limits.maxAreaChangePercent, within: Math.abs(a) <= limits.maxAreaChangePercent, text: `area ${sgn(a)} % against a limit of ±${fmt(limits.maxAreaChangePercent)} %` });
	const fc = pct(m.facesAfter, m.facesBefore);
	lines.push({
		measure: 'faces',
		measured: fc,
		limit: limits.maxFaceChangePercent,
		within: Math.abs(fc) <= limits.maxFaceChangePercent,
		text: `faces ${fmtCount(m.facesBefore)} → ${fmtCount(m.facesAfter)} (${sgn(fc)} %) against a limit of ±${fmt(limits.maxFaceChangePercent)} %`
	});
	const devLimit = limits.maxDeviation.mode === 'absolute' ? limits.maxDeviation.value : limits.maxDeviation.value * targetCellSize;
	const dev = m.deviation;
	// The move and its limit in one unit (the limit's), as the rule texts do.
	// A move within the round-off of the part's coordinates (an exact weld measures ~1e-15) reads 0,
	// as in the headline. The part's size: the square root of the original's area, which the stored
	// measures always have (the move is measured in the original's units, after undoing a rescale);
	// close to the bounding-box diagonal for compact parts, smaller for slender ones, so the test
	// errs towards showing a value.
	const scale = Math.sqrt(Math.max(m.areaBefore > 0 ? m.areaBefore : m.areaAfter / f ** 2, 0));
	const du = displayUnit([devLimit, dev], units || 'units', 1, { scale });
	const lenText = (x: number) => (units ? fmtLength(x, units, { unit: du, scale }) : fmt(isRoundOff(x, 1, scale) ? 0 : x));
	lines.push({
		measure: 'deviation',
		measured: dev,
		limit: devLimit,
		within: dev <= devLimit,
		text: `surface moved up to ${lenText(dev)}${f !== 1 ? ` (after undoing the ×${fmt(f)} rescale)` : ''} against a limit of ${lenText(devLimit)}`
	});
	const out = lines.filter((l) => l.within === false);
	return { within: out.length === 0, lines, reason: out.length ? `Repair outside its limits: ${out.map((l) => l.text).join('; ')}.` : '' };
}
