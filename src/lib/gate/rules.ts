// Evaluates a gate profile against an inspection report. Every result carries a plain-language
// explanation for designers: what it means for the solver, where on the shape, what to change upstream.
import type { InspectionReport, Vec3 } from '../mesh/report';
import { SIZE_IN_CELLS, type GateRules } from './profile';
import { displayUnit, fmtArea, fmtCount, fmtLength, fmtNumber, fmtPercent, fmtPoint, plural, type DisplayUnit } from '../format';

export const RULE_IDS = [
	'closed',
	'manifold',
	'outward-oriented',
	'no-self-intersections',
	'min-edge-length',
	'max-shells',
	'expected-genus',
	'max-degenerate-faces',
	'expected-size',
	'walls-and-gaps'
] as const;
export type RuleId = (typeof RULE_IDS)[number];

export const RULE_TITLES: Record<RuleId, string> = {
	closed: 'Closed surface',
	manifold: 'Manifold edges and vertices',
	'outward-oriented': 'Consistent, outward orientation',
	'no-self-intersections': 'No self-intersections',
	'min-edge-length': 'Shortest edge',
	'max-shells': 'Number of shells',
	'expected-genus': 'Expected genus',
	'max-degenerate-faces': 'Zero-area faces',
	'expected-size': 'Size and units',
	'walls-and-gaps': 'Walls and gaps against the cell size'
};

/** How a rule came out: failed blocks the revision; not-checked (the fact was not measured) warns. */
export type RuleVerdict = 'passed' | 'failed' | 'not-checked';

/** The only place a verdict becomes a severity, so no failed rule can end without one. */
export const VERDICT_SEVERITY = { passed: 'info', failed: 'blocking', 'not-checked': 'warning' } as const satisfies Record<RuleVerdict, RuleOutcome['severity']>;

export interface RuleOutcome {
	rule: RuleId;
	passed: boolean;
	severity: 'blocking' | 'warning' | 'info';
	measured: string;
	limit: string;
	explanation: string;
	/** Where to look: points in model coordinates, for the viewer and the designer. */
	location: { points: Vec3[]; note?: string } | null;
}

export interface GateContext {
	units: string;
	targetCellSize: number;
}

// Numbers go through $lib/format: units always, 4 significant digits, round-off (against the part's
// size) written as 0, and a limit and its finding in one unit.
const n = fmtCount;
const len = (x: number, units: string, scale?: number | null, unit?: DisplayUnit) => fmtLength(x, units, { scale, unit });
const at = (p: Vec3, units: string, scale: number) => fmtPoint(p, units, { scale });

/** Minimum edge length the profile asks for, in project units, or null when the rule is off. */
export function minEdgeThreshold(rules: GateRules, ctx: GateContext): number | null {
	if (!rules.minEdgeLength) return null;
	return rules.minEdgeLength.mode === 'absolute' ? rules.minEdgeLength.value : rules.minEdgeLength.value * ctx.targetCellSize;
}

/** Millimetres per unit, for the unit mistakes a file most often carries (STL and OBJ store no units). */
const MM_PER_UNIT: Record<string, number> = { mm: 1, cm: 10, m: 1000, in: 25.4, ft: 304.8 };
const UNIT_WORDS: Record<string, string> = { mm: 'millimetres', cm: 'centimetres', m: 'metres', in: 'inches', ft: 'feet' };
const unitWords = (u: string) => UNIT_WORDS[u] ?? u;
/** "metres read as millimetres": what a unit fix says happened at export. */
const misread = (f: UnitFix) => `${unitWords(f.fileUnits)} read as ${unitWords(f.projectUnits)}`;

/** The body's size as the scale rule measures it: the bounding-box diagonal, in model units. */
export function bodySize(r: InspectionReport): number {
	return Math.hypot(r.bbox.max[0] - r.bbox.min[0], r.bbox.max[1] - r.bbox.min[1], r.bbox.max[2] - r.bbox.min[2]);
}

/** The expected size range in project units, or null when the profile does not check size. */
export function expectedSizeRange(rules: GateRules, ctx: GateContext): { min: number; max: number } | null {
	const e = rules.expectedSize;
	if (!e) return null;
	return e.mode === 'absolute' ? { min: e.min, max: e.max } : { min: e.min * ctx.targetCellSize, max: e.max * ctx.targetCellSize };
}

/** A unit mistake that explains a size: multiply the coordinates by factor (file drawn in fileUnits, read as projectUnits). */
export interface UnitFix {
	factor: number;
	fileUnits: string;
	projectUnits: string;
}

/**
 * Of the usual unit factors (a file drawn in mm, cm, m, in or ft but read in the project's units),
 * the one that brings `size` inside the range and nearest its middle on a log scale; null when none
 * brings it inside, or the project's units are not one of those.
 */
export function likelyUnitFix(size: number, range: { min: number; max: number }, projectUnits: string): UnitFix | null {
	const p = MM_PER_UNIT[projectUnits];
	if (!p || !(size > 0)) return null;
	const mid = Math.log(range.min * range.max) / 2;
	let best: UnitFix | null = null;
	let bestDist = Infinity;
	for (const [u, mm] of Object.entries(MM_PER_UNIT)) {
		if (u === projectUnits) continue;
		const factor = Number((mm / p).toPrecision(12));
		const scaled = size * factor;
		if (scaled < range.min || scaled > range.max) continue;
		const dist = Math.abs(Math.log(scaled) - mid);
		if (dist < bestDist) [best, bestDist] = [{ factor, fileUnits: u, projectUnits }, dist];
	}
	return best;
}

/** Below this many target cells across, a body is too small for any CFD case (see unsetSizeFix). */
export const UNSET_SIZE_MIN_CELLS = 0.5;
/**
 * Common practice: a body meshed for CFD mostly spans tens to thousands of target cells. The unit
 * factor that best explains a size with no size rule is the one landing nearest the middle of this
 * band (about 300 cells): the SIZE_IN_CELLS range is too wide to tell ×0.01 from ×0.001.
 */
const TYPICAL_CELLS = { min: 10, max: 10_000 };

/**
 * Where a project sets no size rule, a size still points to a unit mistake when the whole body is
 * under UNSET_SIZE_MIN_CELLS target cells across (one cell is wider than the whole body, so no
 * volume mesh can resolve it) or over SIZE_IN_CELLS.max cells, and a usual unit factor brings it
 * into the TYPICAL_CELLS band. Half a cell is far stricter than the rule's 10 so that a small
 * body a project never asked about is not flagged: only sizes no CFD case can use are (a part in
 * metres read as millimetres is a few hundredths of a cell). Returns that fix, or null.
 */
export function unsetSizeFix(r: InspectionReport, rules: GateRules, ctx: GateContext): UnitFix | null {
	if (rules.expectedSize || r.faces === 0 || !(ctx.targetCellSize > 0)) return null;
	const size = bodySize(r);
	const cells = size / ctx.targetCellSize;
	if (cells >= UNSET_SIZE_MIN_CELLS && cells <= SIZE_IN_CELLS.max) return null;
	return likelyUnitFix(size, { min: TYPICAL_CELLS.min * ctx.targetCellSize, max: TYPICAL_CELLS.max * ctx.targetCellSize }, ctx.units);
}

/**
 * The rescale a held revision could take: when the size rule fails and a usual unit factor explains
 * it, or, with no size rule, when the size is one no CFD case can use (unsetSizeFix).
 */
export function scaleFix(r: InspectionReport, rules: GateRules, ctx: GateContext): UnitFix | null {
	const range = expectedSizeRange(rules, ctx);
	if (!range) return unsetSizeFix(r, rules, ctx);
	if (r.faces === 0) return null;
	const size = bodySize(r);
	if (size >= range.min && size <= range.max) return null;
	return likelyUnitFix(size, range, ctx.units);
}

export const fmtFactor = (f: number) => `×${fmtNumber(f)}`;

export function evaluateGate(r: InspectionReport, rules: GateRules, ctx: GateContext): RuleOutcome[] {
	const u = ctx.units;
	const size = r.faces ? bodySize(r) : null;
	const out: RuleOutcome[] = [];
	// passed and severity are derived from the verdict and written last, so nothing in o can unset them.
	const push = (v: RuleVerdict, o: Omit<RuleOutcome, 'passed' | 'severity'>) => out.push({ ...o, passed: v === 'passed', severity: VERDICT_SEVERITY[v] });
	const verdict = (ok: boolean): RuleVerdict => (ok ? 'passed' : 'failed');

	if (rules.closed) {
		const holes = [...r.holes].sort((a, b) => b.perimeter - a.perimeter);
		const big = holes[0];
		// The cause comes from the hints, which weigh the evidence (hints.ts), never from one measure.
		const seams = r.hints.find((h) => h.kind === 'unwelded-seams');
		const cut = r.hints.find((h) => h.kind === 'clipped-by-bbox-plane');
		const flat = r.hints.find((h) => h.kind === 'flat-surface');
		const slits = r.hints.find((h) => h.kind === 'zero-width-openings');
		const weldCloses = seams && r.exactWeld ? r.exactWeld.boundaryEdges === 0 : false;
		push(verdict(r.boundaryEdges === 0), {
			rule: 'closed',
			measured: r.boundaryEdges === 0 ? 'no open edges' : `${plural(r.boundaryLoops, 'hole')}, ${plural(r.boundaryEdges, 'open edge')}`,
			limit: 'no open edges',
			explanation:
				r.boundaryEdges === 0
					? 'The surface is closed: every edge joins exactly two faces, so the solver can tell inside from outside.'
					: [
							`The surface has ${plural(r.boundaryLoops, 'hole')} (${plural(r.boundaryEdges, 'edge')} that belong to only one face).`,
							'A CFD mesher needs a closed surface to tell fluid from solid; through a gap the volume mesh leaks and the case will not run.',
							big && !(slits && slits.count === r.boundaryLoops) ? `The largest hole is ${len(big.perimeter, u)} around, centred near ${at(big.centroid, u, size ?? 0)}.` : '',
							seams
								? weldCloses
									? 'All of these openings are unwelded seams: vertices at the same position are stored twice, and an exact weld closes the surface without moving anything. Weld first (one repair step, or weld on export).'
									: `Part of this comes from unwelded seams: an exact weld would leave ${plural(r.exactWeld!.boundaryEdges, 'open edge')}. Weld first, then look at what is left.`
								: flat
									? 'The surface is a flat sheet, not a body: it has no thickness, so it cannot enclose a volume. Export the solid, not one of its faces.'
									: slits
										? `${slits.message}${slits.count < r.boundaryLoops ? ` The other ${plural(r.boundaryLoops - slits.count, 'opening')} ${r.boundaryLoops - slits.count === 1 ? 'is a real hole' : 'are real holes'}: close ${r.boundaryLoops - slits.count === 1 ? 'it' : 'them'} where the shape is made, or let a repair fill ${r.boundaryLoops - slits.count === 1 ? 'it' : 'them'}.` : ''}`
										: cut
										? `${cut.message} Enlarging the sampling box upstream is better than patching here.`
										: 'Nothing about these openings points to a particular cause: close them where the shape is made (cap the openings, or add the missing faces in the CAD export), then export again; small holes can also be filled by a repair.'
						]
							.filter(Boolean)
							.join(' '),
			location: holes.length ? { points: holes.slice(0, 20).map((h) => h.centroid), note: 'hole centres, largest first' } : null
		});
	}

	if (rules.manifold) {
		const ok = r.nonManifoldEdges === 0 && r.nonManifoldVertices === 0;
		push(verdict(ok), {
			rule: 'manifold',
			measured: ok ? 'none' : `${plural(r.nonManifoldEdges, 'edge')} on 3+ faces, ${plural(r.nonManifoldVertices, 'pinched vertex', 'pinched vertices')}`,
			limit: 'none',
			explanation: ok
				? 'Every edge joins at most two faces and every vertex has a single fan of faces around it.'
				: 'Some edges are shared by three or more faces, or some vertices join surfaces that touch only at a point. The solver cannot decide which side is fluid there, and surface meshers often fail or create zero-thickness cells. Upstream: keep parts that touch apart by a small gap, or merge them into one solid before exporting.',
			location: null
		});
	}

	if (rules.outwardOriented) {
		const closedShells = r.shells.filter((s) => s.closed);
		const inverted = closedShells.filter((s) => s.signedVolume < 0).length;
		const ok = r.consistentlyOriented && inverted === 0;
		push(verdict(ok), {
			rule: 'outward-oriented',
			measured: ok
				? 'consistent and outward'
				: [!r.consistentlyOriented ? `${plural(r.flippedFaces, 'face')} facing the wrong way` : '', inverted ? `${plural(inverted, 'shell')} inside-out` : '']
						.filter(Boolean)
						.join(', '),
			limit: 'all faces outward',
			explanation: ok
				? 'All faces point outwards consistently, so normals, volume and forces come out with the right sign.'
				: `${!r.orientable ? 'Part of the surface is non-orientable (like a Möbius strip), which no solver can accept. ' : ''}Some faces point inwards while their neighbours point outwards${inverted ? ', or a whole shell is inside-out (negative volume)' : ''}. Solvers use face orientation to decide which side is fluid; wrong normals give wrong forces or a failed mesh. ${!r.orientable ? 'No repair can orient a non-orientable surface: it has no consistent inside and outside. Upstream: rebuild that part as a closed two-sided solid.' : 'This is usually a winding-order slip in the exporter; a repair can re-orient the faces without moving any vertex.'}`,
			location: null
		});
	}

	if (rules.noSelfIntersections) {
		const pairs = r.selfIntersectingPairs;
		// Crossings between two shells are bodies passing into each other, not a surface folding through itself.
		const overlap = r.hints.find((h) => h.kind === 'overlapping-bodies');
		const between = r.selfIntersectionSample.filter((x) => x.shells && x.shells[0] !== x.shells[1]);
		const overlapAll = between.length > 0 && between.length === r.selfIntersectionSample.length;
		const overlapAt = between[0]?.point;
		push(pairs === null ? 'not-checked' : verdict(pairs === 0), {
			rule: 'no-self-intersections',
			measured: pairs === null ? 'not checked' : pairs === 0 ? 'none' : `${plural(pairs, 'crossing face pair')}`,
			limit: 'none',
			explanation:
				pairs === null
					? 'The self-intersection check did not run for this revision.'
					: pairs === 0
						? 'No two faces cross or touch other than along shared edges and vertices.'
						: r.hints.some((h) => h.kind === 'unwelded-seams')
							? `${plural(pairs, 'pair')} of faces cross or touch other than along shared edges${r.selfIntersectionSample[0] ? `, for example near ${at(r.selfIntersectionSample[0].point, u, size ?? 0)}` : ''}. The seams of this mesh are not welded, and faces that meet only along such a seam are counted here too: weld first (nothing moves), then check again to see which crossings are real.`
							: r.hints.some((h) => h.kind === 'zero-width-openings')
								? `${plural(pairs, 'pair')} of faces cross or touch other than along shared edges${r.selfIntersectionSample[0] ? `, for example near ${at(r.selfIntersectionSample[0].point, u, size ?? 0)}` : ''}. This mesh has T-junction slits (see "Closed surface"), and the faces on either side of a slit touch along it without sharing an edge, so they are counted here too: close the slits first (nothing moves), then check again to see which crossings are real.`
							: overlap && overlapAll
								? `${plural(pairs, 'pair')} of faces cross or touch other than along shared edges${overlapAt ? `, for example near ${at(overlapAt, u, size ?? 0)}` : ''}. ${overlap.message} Shellgate does not do this automatically: it changes the shape.`
								: `${plural(pairs, 'pair')} of faces cross or touch other than along shared edges${r.selfIntersectionSample[0] ? `, for example near ${at(r.selfIntersectionSample[0].point, u, size ?? 0)}` : ''}: the surface passes through itself. The solver cannot tell inside from outside where a surface crosses itself. Shellgate does not repair this automatically: moving faces would change the shape. Upstream: regenerate or remesh the shape where it folds through itself (where walls are thinner than the sampling or export resolution, refine there).${overlap ? ` Besides: ${overlap.message}` : ''}`,
			location: r.selfIntersectionSample.length ? { points: r.selfIntersectionSample.slice(0, 20).map((s) => s.point), note: 'sample of crossing points' } : null
		});
	}

	const unitFix = scaleFix(r, rules, ctx);
	const minLen = minEdgeThreshold(rules, ctx);
	if (minLen !== null) {
		const ok = r.faces === 0 || r.minEdgeLength >= minLen;
		// The finding and the limit in one unit, so "0.0421 mm" stands beside "≥ 0.1 mm".
		const du = displayUnit([minLen, r.minEdgeLength], u, 1, { scale: size });
		push(verdict(ok), {
			rule: 'min-edge-length',
			measured: `shortest ${len(r.minEdgeLength, u, size, du)}${!ok && r.shortEdges ? `, ${plural(r.shortEdges, 'edge')} below the limit` : ''}`,
			limit: `≥ ${len(minLen, u, null, du)}${rules.minEdgeLength?.mode === 'fraction-of-cell' ? ` (${fmtNumber(rules.minEdgeLength.value)} × cell size ${len(ctx.targetCellSize, u)})` : ''}`,
			explanation: ok
				? 'No edge is shorter than the limit set for the target cell size.'
				: unitFix
					? `The edges are short because the whole body is: it measures ${len(bodySize(r), u)} across, and its size points to a unit mistake (${misread(unitFix)}; see Size and units). Scaled ${fmtFactor(unitFix.factor)} the shortest edge would be ${len(r.minEdgeLength * unitFix.factor, u)}, ${r.minEdgeLength * unitFix.factor >= minLen ? 'above' : 'still below'} the limit. Fix the units first; collapsing edges of a body at the wrong scale would wreck it.`
					: `Some edges are much shorter than the target cell size (${len(ctx.targetCellSize, u)}). The mesher either refines down to them, wasting cells and time step, or produces badly shaped cells next to them. Upstream: export with a coarser or more uniform triangulation, or let a repair collapse the short edges.`,
			location: null
		});
	}

	if (rules.maxShells !== null) {
		const ok = r.components <= rules.maxShells;
		const tiny = r.hints.find((h) => h.kind === 'floating-shells');
		// By measured sizes: the largest shell's share of the area says whether the rest are specks or bodies.
		const areas = r.shells.map((s) => s.area).sort((a, b) => b - a);
		const total = areas.reduce((a, b) => a + b, 0);
		const restShare = total > 0 ? 1 - areas[0] / total : 0;
		const smallest = areas.length ? areas[areas.length - 1] : 0;
		push(verdict(ok), {
			rule: 'max-shells',
			measured: plural(r.components, 'shell'),
			limit: `≤ ${rules.maxShells}`,
			explanation: ok
				? 'The number of separate surfaces is as expected.'
				: r.hints.some((h) => h.kind === 'unwelded-seams') && r.exactWeld && r.exactWeld.shells <= rules.maxShells
					? `The mesh reads as ${plural(r.components, 'separate surface')} only because its seams are not welded: an exact weld (nothing moves) leaves ${plural(r.exactWeld.shells, 'shell')}, within the limit of ${rules.maxShells}. Weld first.`
					: `The mesh has ${plural(r.components, 'separate surface')} where at most ${rules.maxShells} ${rules.maxShells === 1 ? 'is' : 'are'} expected. ${tiny ? tiny.message + ' ' : ''}${
						tiny
							? 'Loose specks become extra bodies in the flow and waste cells; removing them (a repair step, or filtering small components upstream) changes the shape very little.'
							: `The shells other than the largest make up ${fmtPercent(restShare)} of the area (the smallest is ${fmtArea(smallest, u, { scale: size })}), so they look like separate bodies rather than specks: each becomes its own body in the flow. ${r.hints.some((h) => h.kind === 'overlapping-bodies') ? 'They also pass into each other (see the self-intersection rule), so raising the shell limit would not make this a clean assembly: unite them or move them apart upstream.' : "If the case is meant to have one body, join them upstream; if it is an assembly, raise this project's shell limit."}`
					}`,
			location: null
		});
	}

	if (rules.expectedGenus !== null) {
		const ok = r.genus === rules.expectedGenus;
		push(verdict(ok), {
			rule: 'expected-genus',
			measured: r.genus === null ? 'undefined (non-manifold or non-orientable)' : `genus ${r.genus}`,
			limit: `genus ${rules.expectedGenus}`,
			explanation: ok
				? `The shape has ${rules.expectedGenus === 0 ? 'no through-holes' : plural(rules.expectedGenus, 'through-hole')}, as expected.`
				: `The number of through-holes (handles) differs from what this project expects (${rules.expectedGenus}). A generator can open or close a tunnel without anyone noticing, and that changes the flow completely. Check the shape for thin walls that merged or split.`,
			location: null
		});
	}

	{
		const ok = r.degenerateFaces <= rules.maxDegenerateFaces;
		push(verdict(ok), {
			rule: 'max-degenerate-faces',
			measured: plural(r.degenerateFaces, 'zero-area face'),
			limit: `≤ ${n(rules.maxDegenerateFaces)}`,
			explanation: ok
				? 'No faces of exactly zero area beyond the allowed number.'
				: 'Some faces have exactly zero area (repeated or collinear corners). They have no normal, so meshers skip or choke on them. A repair can remove them; upstream, they usually come from merging vertices after export.',
			location: null
		});
	}

	const range = expectedSizeRange(rules, ctx);
	if (!range && unitFix) {
		// No size rule in this project: a warning, not a hold, for a size no CFD case can use.
		const across = bodySize(r);
		const cellsAcross = across / ctx.targetCellSize;
		push('not-checked', {
			rule: 'expected-size',
			measured: `${len(across, u)} across (${fmtNumber(Number(cellsAcross.toPrecision(2)))} cells of ${len(ctx.targetCellSize, u)}); likely ${fmtFactor(unitFix.factor)} (${unitFix.fileUnits} → ${unitFix.projectUnits})`,
			limit: 'no size rule in this project',
			explanation: [
				`This project does not check size, so this does not hold the revision, but the body measures ${len(across, u)} across (bounding-box diagonal), ${cellsAcross < UNSET_SIZE_MIN_CELLS ? 'less than half a cell' : `more than ${n(SIZE_IN_CELLS.max)} cells`} of the target cell size ${len(ctx.targetCellSize, u)}: no volume mesh for CFD can use that size.`,
				`Mesh files carry no units; the numbers look like ${misread(unitFix)}: scaled ${fmtFactor(unitFix.factor)} (${unitFix.fileUnits} → ${unitFix.projectUnits}) the body would be ${len(across * unitFix.factor, u)} across.`,
				`Export again in ${unitWords(unitFix.projectUnits)}, or let a repair rescale it by ${fmtFactor(unitFix.factor)}. To hold such files, an administrator can turn on the project's size check.`
			].join(' '),
			location: null
		});
	}
	if (range) {
		const across = bodySize(r);
		const du = displayUnit([range.min, range.max, across], u, 1);
		const ok = across >= range.min && across <= range.max;
		const fix = ok ? null : scaleFix(r, rules, ctx);
		const cells = rules.expectedSize?.mode === 'cells' ? ` (${n(rules.expectedSize.min)} to ${n(rules.expectedSize.max)} cells of ${len(ctx.targetCellSize, u)})` : '';
		push(r.faces === 0 ? 'not-checked' : verdict(ok), {
			rule: 'expected-size',
			measured: r.faces === 0 ? 'not checked: no faces' : `${len(across, u, null, du)} across${fix ? `; likely ${fmtFactor(fix.factor)} (${fix.fileUnits} → ${fix.projectUnits})` : ''}`,
			limit: `${len(range.min, u, null, du)} to ${len(range.max, u, null, du)} across${cells}`,
			explanation:
				r.faces === 0
					? 'The mesh has no faces, so it has no size to check.'
					: ok
						? 'The body’s size (bounding-box diagonal) is within the range this project expects, so its units look right.'
						: [
								`The body measures ${len(across, u, null, du)} across (bounding-box diagonal), ${across < range.min ? 'smaller' : 'larger'} than the ${len(range.min, u, null, du)} to ${len(range.max, u, null, du)} this project expects${cells}.`,
								'Mesh files carry no units, so this is most often a unit mistake at export.',
								fix
									? `The numbers look like ${misread(fix)}: scaled ${fmtFactor(fix.factor)} (${fix.fileUnits} → ${fix.projectUnits}) the body would be ${len(across * fix.factor, u, null, du)} across. Export again in ${unitWords(fix.projectUnits)}, or let a repair rescale it by ${fmtFactor(fix.factor)}.`
									: `No usual unit factor explains it (mm, cm, m, in and ft were tried). Check the export scale, and the project’s target cell size and expected size.`
							].join(' '),
			location: null
		});
	}
	if (rules.minWallGapCells !== null) {
		const need = rules.minWallGapCells * ctx.targetCellSize;
		const c = r.cellSizeChecks ?? null;
		const cells = (x: number) => `${(x / ctx.targetCellSize).toLocaleString('en-US', { maximumSignificantDigits: 2 })} cells`;
		const limit = `≥ ${rules.minWallGapCells} cells (${len(need, u)})`;
		if (r.faces === 0 || !c || c.range < need) {
			push('not-checked', {
				rule: 'walls-and-gaps',
				measured: 'not measured',
				limit,
				explanation: r.faces === 0 ? 'The mesh has no faces, so it has no walls or gaps to measure.' : 'Walls and gaps were not measured for this cell size on this check. Check it again to measure them.',
				location: null
			});
		} else {
			const wall = c.thinnestWall, gap = c.narrowestGap;
			const wallBad = wall !== null && wall.value < need, gapBad = gap !== null && gap.value < need;
			const show = (f: typeof wall, what: string) => (f ? `${what} ${len(f.value, u)} (${cells(f.value)})` : `no ${what} under ${len(c.range, u)}`);
			push(verdict(!wallBad && !gapBad), {
				rule: 'walls-and-gaps',
				measured: `${show(wall, 'thinnest wall')}; ${show(gap, 'narrowest gap')}`,
				limit,
				explanation:
					!wallBad && !gapBad
						? `Every wall and every gap is at least ${rules.minWallGapCells} cells of ${len(ctx.targetCellSize, u)} across, so the volume mesher can put cells across them.`
						: [
								wallBad
									? `The thinnest wall is ${len(wall!.value, u)}, ${cells(wall!.value)} across, near ${at(wall!.from, u, size ?? 0)}; ${plural(c.thinWallFaces, 'face')} (${len(c.thinWallArea, `${u}²`)}) sit on walls thinner than ${rules.minWallGapCells} cells. With so few cells across, the volume mesher squashes or drops the cells inside the wall and the solid can leak through it. Upstream: thicken the wall there, or ask for a finer cell size locally.`
									: '',
								gapBad
									? `The narrowest gap is ${len(gap!.value, u)}, ${cells(gap!.value)} across, near ${at(gap!.from, u, size ?? 0)}; ${plural(c.narrowGapFaces, 'face')} border gaps narrower than ${rules.minWallGapCells} cells. The mesher either bridges such a gap (the surfaces fuse and the flow path there closes) or fills it with collapsed cells. Upstream: move the surfaces at least ${len(need, u)} apart, join them if they are meant to touch, or ask for a finer cell size in the gap.`
									: ''
							]
								.filter(Boolean)
								.join(' '),
				location:
					wallBad || gapBad
						? {
								points: [...(wallBad ? [wall!.from, wall!.to] : []), ...(gapBad ? [gap!.from, gap!.to] : [])],
								note: `${wallBad ? 'thinnest wall' : ''}${wallBad && gapBad ? ' and ' : ''}${gapBad ? 'narrowest gap' : ''}: both ends of the measuring ray`
							}
						: null
			});
		}
	}
	return out;
}

/**
 * Rules that hold the revision. Anything not passed counts unless it is explicitly a warning, so an
 * outcome with a missing or unexpected severity (e.g. from stored or hand-built data) still blocks.
 */
export function blockingFailures(outcomes: RuleOutcome[]): RuleOutcome[] {
	return outcomes.filter((o) => !o.passed && o.severity !== 'warning');
}

/** The queue sorts on this: blocking failures weigh 10, warnings 1. */
export function severityScore(outcomes: RuleOutcome[]): number {
	return outcomes.reduce((s, o) => s + (o.passed ? 0 : o.severity === 'warning' ? 1 : 10), 0);
}

export function gatePasses(outcomes: RuleOutcome[]): boolean {
	return blockingFailures(outcomes).length === 0;
}
