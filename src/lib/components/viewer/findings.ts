/** The findings list beside the view: counts from the report, sub-items located through the overlay geometry. */
import type { MeshOverlays } from '$lib/mesh/overlays';
import { loopForHole } from '$lib/mesh/overlays';
import type { InspectionReport } from '$lib/mesh/report';
import { fmtMeasure, fmtPoint } from '$lib/format';
import { KIND_ORDER, KIND_STYLE, type OverlayKind } from './palette';

/** Where a finding sits: a point, a radius to frame, and what to highlight. */
export interface FindingTarget {
	center: [number, number, number];
	radius: number;
	segments?: Float32Array;
	faces?: Uint32Array;
}

export interface FindingItem {
	key: string;
	label: string;
	/** Faces need the scene's positions to be located; everything else is located here. */
	target: FindingTarget | { faces: Uint32Array };
}

export interface FindingGroup {
	kind: OverlayKind;
	label: string;
	/** From the report when there is one; null = not checked. */
	count: number | null;
	/** Set when the number is not the report's (no report, or a stage that did not run). */
	note: string | null;
	items: FindingItem[];
	/** Items left out of the list (the overlay still draws them). */
	more: number;
}

export const SUB_ITEMS_LISTED = 50;

/**
 * A length as the project writes lengths everywhere (format.ts: 4 significant digits, always a unit,
 * round-off below what float32 resolves at the part's size written 0); scale is the part's size.
 */
export function fmtLength(x: number, units: string, scale?: number | null): string {
	return fmtMeasure(x, units, 1, { scale });
}

function segTarget(seg: Float32Array, s: number): FindingTarget {
	const o = 6 * s;
	const len = Math.hypot(seg[o + 3] - seg[o], seg[o + 4] - seg[o + 1], seg[o + 5] - seg[o + 2]);
	return {
		center: [0.5 * (seg[o] + seg[o + 3]), 0.5 * (seg[o + 1] + seg[o + 4]), 0.5 * (seg[o + 2] + seg[o + 5])],
		radius: Math.max(len, 1e-9),
		segments: seg.slice(o, o + 6)
	};
}

function segLength(seg: Float32Array, s: number): number {
	const o = 6 * s;
	return Math.hypot(seg[o + 3] - seg[o], seg[o + 4] - seg[o + 1], seg[o + 5] - seg[o + 2]);
}

/** scale: the part's size (bounding-box diagonal) in units, for the round-off rule of the lengths. */
export function buildFindings(report: InspectionReport | null, o: MeshOverlays | null, units: string, scale?: number | null): FindingGroup[] {
	const len = (x: number) => fmtLength(x, units, scale);
	const groups: FindingGroup[] = [];
	const viewerNote = report ? null : 'viewer';
	for (const kind of KIND_ORDER) {
		const label = KIND_STYLE[kind].label;
		let count: number | null = null, note = viewerNote;
		const items: FindingItem[] = [];
		let total = 0;
		switch (kind) {
			case 'holes': {
				count = report ? report.boundaryLoops : (o?.holes.length ?? null);
				if (report) {
					report.holes.forEach((h, i) => {
						const d = Math.hypot(h.bbox.max[0] - h.bbox.min[0], h.bbox.max[1] - h.bbox.min[1], h.bbox.max[2] - h.bbox.min[2]);
						let segments: Float32Array | undefined;
						if (o) {
							const l = loopForHole(o.holes, h.centroid);
							if (l >= 0) segments = o.holeSegments.subarray(6 * o.holes[l].segStart, 6 * (o.holes[l].segStart + o.holes[l].edgeCount));
						}
						const plane = h.onBboxPlane ? `, flat on ${h.onBboxPlane}` : '';
						items.push({ key: `holes:${i}`, label: `hole ${i + 1}, ${len(h.perimeter)} around${plane}`, target: { center: h.centroid, radius: Math.max(d / 2, 1e-9), segments } });
					});
					total = report.boundaryLoops;
				} else if (o) {
					o.holes.forEach((h, i) => {
						const segments = o.holeSegments.subarray(6 * h.segStart, 6 * (h.segStart + h.edgeCount));
						items.push({ key: `holes:${i}`, label: `hole ${i + 1}, ${len(h.perimeter)} around`, target: { center: h.centroid, radius: h.perimeter / Math.PI / 2, segments } });
					});
					total = o.holes.length;
				}
				break;
			}
			case 'nonManifoldEdges': {
				count = report ? report.nonManifoldEdges : (o?.nonManifoldEdgeCount ?? null);
				if (o) {
					const n = o.nonManifoldEdgeSegments.length / 6;
					for (let s = 0; s < n && s < SUB_ITEMS_LISTED; s++) {
						items.push({ key: `nme:${s}`, label: `edge ${s + 1}, ${len(segLength(o.nonManifoldEdgeSegments, s))} long`, target: segTarget(o.nonManifoldEdgeSegments, s) });
					}
					total = o.nonManifoldEdgeCount;
				}
				break;
			}
			case 'nonManifoldVertices': {
				count = report ? report.nonManifoldVertices : (o?.nonManifoldVertexCount ?? null);
				if (o) {
					const pts = o.nonManifoldVertexPoints;
					for (let i = 0; i < pts.length / 3 && i < SUB_ITEMS_LISTED; i++) {
						const c: [number, number, number] = [pts[3 * i], pts[3 * i + 1], pts[3 * i + 2]];
						items.push({ key: `nmv:${i}`, label: `vertex ${i + 1} at ${fmtPoint(c, units, { scale })}`, target: { center: c, radius: 0 } });
					}
					total = o.nonManifoldVertexCount;
				}
				break;
			}
			case 'selfIntersections': {
				if (report) {
					count = report.selfIntersectingPairs;
					note = count === null ? 'not checked' : null;
					report.selfIntersectionSample.forEach((x, i) => {
						if (i >= SUB_ITEMS_LISTED) return;
						items.push({ key: `si:${i}`, label: `faces ${x.a} × ${x.b}`, target: { faces: Uint32Array.of(x.a, x.b) } });
					});
					total = report.selfIntersectionSample.length;
					if (count !== null && count > total) note = `${total} sampled`;
				} else {
					count = null;
					note = 'needs the report';
				}
				break;
			}
			case 'shortEdges': {
				count = report ? report.shortEdges : (o?.shortEdgeCount ?? null);
				if (report && report.tolerances.minEdgeLength > 0) note = `under ${len(report.tolerances.minEdgeLength)}`;
				if (o) {
					const n = o.shortEdgeSegments.length / 6;
					for (let s = 0; s < n && s < SUB_ITEMS_LISTED; s++) {
						items.push({ key: `se:${s}`, label: `edge ${s + 1}, ${len(segLength(o.shortEdgeSegments, s))}`, target: segTarget(o.shortEdgeSegments, s) });
					}
					total = o.shortEdgeCount;
				}
				break;
			}
			case 'degenerateFaces': {
				count = report ? report.degenerateFaces : (o?.degenerateFaces.length ?? null);
				if (o) {
					for (let i = 0; i < o.degenerateFaces.length && i < SUB_ITEMS_LISTED; i++) {
						items.push({ key: `deg:${i}`, label: `face ${o.degenerateFaces[i]}`, target: { faces: o.degenerateFaces.subarray(i, i + 1) } });
					}
					total = o.degenerateFaces.length;
				}
				break;
			}
			case 'flippedFaces': {
				count = report ? report.flippedFaces : (o?.flippedFaces.length ?? null);
				if (o) {
					for (let i = 0; i < o.flippedFaces.length && i < SUB_ITEMS_LISTED; i++) {
						items.push({ key: `flip:${i}`, label: `face ${o.flippedFaces[i]}`, target: { faces: o.flippedFaces.subarray(i, i + 1) } });
					}
					total = o.flippedFaces.length;
				}
				break;
			}
			case 'floatingShells': {
				count = report ? (report.hints.find((h) => h.kind === 'floating-shells')?.count ?? 0) : (o?.floatingShells.length ?? null);
				if (o) {
					for (let i = 0; i < o.floatingShells.length && i < SUB_ITEMS_LISTED; i++) {
						const b = o.floatingBoxes, b6 = 6 * i;
						const faces = o.floatingStart[i + 1] - o.floatingStart[i];
						items.push({
							key: `float:${i}`,
							label: `shell ${o.floatingShells[i] + 1}, ${faces.toLocaleString('en')} faces`,
							target: {
								center: [0.5 * (b[b6] + b[b6 + 3]), 0.5 * (b[b6 + 1] + b[b6 + 4]), 0.5 * (b[b6 + 2] + b[b6 + 5])],
								radius: 0.5 * Math.hypot(b[b6 + 3] - b[b6], b[b6 + 4] - b[b6 + 1], b[b6 + 5] - b[b6 + 2]),
								faces: o.floatingFaces.subarray(o.floatingStart[i], o.floatingStart[i + 1])
							}
						});
					}
					total = o.floatingShells.length;
				}
				break;
			}
		}
		groups.push({ kind, label, count, note, items, more: Math.max(0, total - items.length) });
	}
	return groups;
}

/** Walls and gaps thinner than the gate's cells, from the report's cell-size checks (not an overlay kind: the colouring by cells across shows them). */
export interface CellFindingGroup {
	which: 'wall' | 'gap';
	label: string;
	/** Regions under the threshold (before the report's cap). */
	count: number;
	note: string;
	items: FindingItem[];
	/** Regions the report left out (it keeps the largest 20 of each). */
	more: number;
}

/**
 * The thinnest wall and the narrowest gap (with the ray across them as a line) and each region of
 * faces under the threshold, largest first, as the report lists them. Empty when the check ran
 * without a cell size.
 */
export function buildCellFindings(report: InspectionReport | null, units: string, scale?: number | null): CellFindingGroup[] {
	const c = report?.cellSizeChecks;
	if (!c) return [];
	const cellsText = (x: number) => `${x.toLocaleString('en-US', { maximumSignificantDigits: 2 })} cells`;
	const out: CellFindingGroup[] = [];
	for (const which of ['wall', 'gap'] as const) {
		const worst = which === 'wall' ? c.thinnestWall : c.narrowestGap;
		const regions = which === 'wall' ? c.wallRegions : c.gapRegions;
		const regionCount = which === 'wall' ? c.wallRegionCount : c.gapRegionCount;
		const noun = which === 'wall' ? 'wall' : 'gap';
		const items: FindingItem[] = [];
		if (worst) {
			const seg = Float32Array.of(...worst.from, ...worst.to);
			items.push({
				key: `${which}:min`,
				label: `${which === 'wall' ? 'thinnest wall' : 'narrowest gap'}: ${fmtMeasure(worst.value, units, 1, { scale })} (${cellsText(worst.cells)}), faces ${worst.face} and ${worst.otherFace}`,
				target: {
					center: [0.5 * (worst.from[0] + worst.to[0]), 0.5 * (worst.from[1] + worst.to[1]), 0.5 * (worst.from[2] + worst.to[2])],
					radius: Math.max(worst.value, 3 * c.cellSize),
					segments: seg,
					faces: Uint32Array.of(worst.face, worst.otherFace)
				}
			});
		}
		regions.forEach((g, i) => {
			items.push({
				key: `${which}:region:${i}`,
				label: `${noun} region ${i + 1}: ${fmtMeasure(g.min, units, 1, { scale })} (${cellsText(g.minCells)}) at least, ${g.faces.toLocaleString('en')} faces, ${fmtMeasure(g.area, units, 2, { scale })}`,
				// The region's size from its area: a disc of that area, at least a few cells across.
				target: { center: [g.centroid[0], g.centroid[1], g.centroid[2]], radius: Math.max(Math.sqrt(g.area / Math.PI), 2 * c.cellSize), faces: Uint32Array.of(g.minFace) }
			});
		});
		out.push({
			which,
			label: which === 'wall' ? 'Thin walls' : 'Narrow gaps',
			count: regionCount,
			note: `under ${c.thinCells} cells`,
			items,
			more: Math.max(0, regionCount - regions.length)
		});
	}
	return out;
}
