// The gate profile: which report facts hold a revision back. Pure data and zod schema, shared by
// server and pages; evaluation lives in rules.ts.
import { z } from 'zod';

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
		.default(null)
});

/**
 * Common practice: a body meshed for CFD spans somewhere between about 10 and 100,000 cells of the
 * target surface cell size. Outside that, the cell size or (far more often) the file's units are wrong.
 */
export const SIZE_IN_CELLS = { mode: 'cells', min: 10, max: 100_000 } as const;

export type GateRules = z.infer<typeof gateRulesSchema>;

export const DEFAULT_GATE_RULES: GateRules = gateRulesSchema.parse({});
