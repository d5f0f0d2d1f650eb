// The gate profile: which report facts hold a revision back. Pure data and zod schema, shared by
// server and pages; evaluation lives in rules.ts.
import { z } from 'zod';

// --- Repair limits: how much a repair may change a part before it is held for a reviewer. ---
/**
 * Defaults (common practice for a clean-up of a surface mesh before CFD, choices of this product):
 * a clean-up should not change the enclosed volume by more than 1 % or the wetted area by more than
 * 5 % (filling the holes of an open part adds their area, a few percent on small parts), should not remove or add more than half the faces, and should not move the surface by more
 * than half a target cell.
 */
export const repairLimitsSchema = z.object({
	maxVolumeChangePercent: z.number().nonnegative().max(1e6).default(1),
	maxAreaChangePercent: z.number().nonnegative().max(1e6).default(5),
	maxFaceChangePercent: z.number().nonnegative().max(1e6).default(50),
	/** Largest distance to the original: absolute in project units, or a fraction of the target cell size. */
	maxDeviation: z.object({ mode: z.enum(['absolute', 'fraction-of-cell']), value: z.number().nonnegative().max(1e9) }).default({ mode: 'fraction-of-cell', value: 0.5 })
});
export type RepairLimitsProfile = z.infer<typeof repairLimitsSchema>;
/** The repair limits of stored gate rules (profiles written before the limits existed get the defaults). */
export function repairLimitsOf(rules: unknown): RepairLimitsProfile {
	const r = (rules as { repairLimits?: unknown } | null)?.repairLimits;
	const parsed = repairLimitsSchema.safeParse(r ?? {});
	return parsed.success ? parsed.data : repairLimitsSchema.parse({});
}
// --- end of repair limits ---

export const gateRulesSchema = z.object({
	closed: z.boolean().default(true),
	manifold: z.boolean().default(true),
	outwardOriented: z.boolean().default(true),
	noSelfIntersections: z.boolean().default(true),
	/** Shortest allowed edge: an absolute length in project units, or a fraction of the target cell size. */
	minEdgeLength: z
		.object({ mode: z.enum(['absolute', 'fraction-of-cell']), value: z.number().nonnegative().max(1e9) })
		.nullable()
		.default({ mode: 'fraction-of-cell', value: 0.02 }),
	maxShells: z.number().int().min(1).max(1_000_000).nullable().default(1),
	expectedGenus: z.number().int().min(0).max(10_000).nullable().default(null),
	maxDegenerateFaces: z.number().int().min(0).max(1e9).default(0),
	/**
	 * Expected size of the body, measured as its bounding-box diagonal: [min, max] in project units
	 * ('absolute'), or in multiples of the target cell size ('cells'). Off (null) unless the project
	 * sets it, so stored profile versions keep the verdicts they gave. SIZE_IN_CELLS is the usual choice.
	 */
	expectedSize: z
		.object({ mode: z.enum(['absolute', 'cells']), min: z.number().positive().max(1e12), max: z.number().positive().max(1e12) })
		.refine((x) => x.min < x.max, { message: 'the smallest expected size must be below the largest', path: ['max'] })
		.nullable()
		.default(null),
	/**
	 * Walls and gaps at least this many target cells across (thickness.ts measures both). Off (null)
	 * unless the project sets it, so stored profile versions keep their verdicts; WALL_GAP_CELLS is
	 * the usual choice.
	 */
	minWallGapCells: z.number().positive().max(1000).nullable().default(null),
	repairLimits: repairLimitsSchema.prefault({})
});

/**
 * Common practice: a volume mesher needs about two cells across a wall or a gap to resolve it
 * (fewer, and it either leaks across the gap or collapses the cells in the wall); many teams ask
 * for three where the flow in the gap matters. 2 is this product's default when the rule is on.
 */
export const WALL_GAP_CELLS = 2;

/**
 * Common practice: a body meshed for CFD spans somewhere between about 10 and 100,000 cells of the
 * target surface cell size. Outside that, the cell size or (far more often) the file's units are wrong.
 */
export const SIZE_IN_CELLS = { mode: 'cells', min: 10, max: 100_000 } as const;

export type GateRules = z.infer<typeof gateRulesSchema>;

export const DEFAULT_GATE_RULES: GateRules = gateRulesSchema.parse({});

export const DEFAULT_REPAIR_LIMITS: RepairLimitsProfile = DEFAULT_GATE_RULES.repairLimits;
