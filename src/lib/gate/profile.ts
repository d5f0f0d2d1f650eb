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
	maxDegenerateFaces: z.number().int().min(0).max(1e9).default(0)
});

export type GateRules = z.infer<typeof gateRulesSchema>;

export const DEFAULT_GATE_RULES: GateRules = gateRulesSchema.parse({});
