// The zod schemas of the app's forms (sveltekit-superforms validates every posted form with one of
// these; field errors come back under the field's name). Shared by server actions and pages.
// Sign-in, password and invite forms live in src/lib/server/auth/forms.ts, upload in upload-form.ts.
import { z } from 'zod';
import { SIZE_IN_CELLS, type GateRules } from './gate/profile';

const ROLE_NAMES = ['admin', 'engineer', 'designer', 'reviewer'] as const;

// --- Revision page ---
export const commentFormSchema = z.object({
	body: z.string().trim().min(1, 'Write something.').max(5000, 'At most 5,000 characters.'),
	/** The pinned point as JSON [x, y, z] (a hidden field set by a click on the shape). */
	point: z.string().max(200).default(''),
	face: z.number().int().min(0).max(2 ** 32 - 1).nullable().default(null)
});

export const returnFormSchema = z.object({
	reason: z.string().trim().min(1, 'Say what should change upstream.').max(1000, 'At most 1,000 characters.')
});

export const signOffFormSchema = z.object({
	note: z.string().trim().max(1000, 'At most 1,000 characters.').default(''),
	overrideReason: z.string().trim().max(2000, 'At most 2,000 characters.').default('')
});

// --- Queue ---
export const assignFormSchema = z.object({
	ids: z.array(z.number().int().positive()).min(1, 'Tick at least one revision.').max(200, 'At most 200 at a time.'),
	assignee: z.string().max(32).default('')
});

// --- Settings: API tokens ---
export const TOKEN_DEFAULT_DAYS = 90;
export const TOKEN_MAX_DAYS = 730;

export const tokenFormSchema = z.object({
	name: z.string().trim().min(1, 'Give the token a name, e.g. the pipeline that uses it.').max(80, 'At most 80 characters.'),
	/** Days until the token stops working; 0 = never. */
	expiresInDays: z
		.number('Pick how long the token works.')
		.int('Whole days.')
		.min(0)
		.max(TOKEN_MAX_DAYS, `At most ${TOKEN_MAX_DAYS} days; create a new token after that.`)
		.default(TOKEN_DEFAULT_DAYS)
});

export const revokeFormSchema = z.object({
	id: z.number('Unknown token.').int('Unknown token.').positive('Unknown token.'),
	confirm: z.string().max(3).default('')
});

// --- Admin: people ---
export const rolesFormSchema = z.object({ userId: z.string().min(1).max(32), roles: z.array(z.enum(ROLE_NAMES)).default([]) });

// --- Project page ---
export const projectSettingsFormSchema = z
	.object({
		units: z.enum(['mm', 'm', 'in']),
		targetCellSize: z.number('Give the target cell size as a number.').positive('The target cell size must be positive.').max(1e6, 'At most 1,000,000.'),
		flowX: z.number('A number.').min(-1e6).max(1e6),
		flowY: z.number('A number.').min(-1e6).max(1e6),
		flowZ: z.number('A number.').min(-1e6).max(1e6)
	})
	.refine((f) => Math.hypot(f.flowX, f.flowY, f.flowZ) > 0, { message: 'The flow direction cannot be zero.', path: ['flowX'] });

const optionalCount = (max: number) => z.number('A whole number, or empty.').int('A whole number.').min(0, 'Not negative.').max(max).nullable().default(null);
const optionalAmount = (max: number) => z.number('A number, or empty.').min(0, 'Not negative.').max(max).nullable().default(null);

/**
 * The gate profile as flat form fields (one per input, so each error sits beside its input); the
 * action turns them into the stored rules and checks those with gateRulesSchema.
 */
export const profileFormSchema = z
	.object({
		closed: z.boolean().default(false),
		manifold: z.boolean().default(false),
		outwardOriented: z.boolean().default(false),
		noSelfIntersections: z.boolean().default(false),
		minEdgeValue: optionalAmount(1e9),
		minEdgeMode: z.enum(['fraction-of-cell', 'absolute']).default('fraction-of-cell'),
		maxShells: z.number('A whole number, or empty.').int('A whole number.').min(1, 'At least 1.').max(1_000_000).nullable().default(null),
		expectedGenus: optionalCount(10_000),
		maxDegenerateFaces: z.number('A whole number.').int('A whole number.').min(0, 'Not negative.').max(1e9).default(0),
		sizeMode: z.enum(['off', 'cells', 'absolute']).default('off'),
		sizeMin: z.number('A number.').positive('Above zero.').max(1e12).default(10),
		sizeMax: z.number('A number.').positive('Above zero.').max(1e12).default(100_000),
		minWallGapCells: z.number('A number, or empty.').positive('Above zero, or empty.').max(1000).nullable().default(null),
		rlVolume: z.number('A number.').min(0, 'Not negative.').max(1e6).default(1),
		rlArea: z.number('A number.').min(0, 'Not negative.').max(1e6).default(5),
		rlFaces: z.number('A number.').min(0, 'Not negative.').max(1e6).default(50),
		rlDevValue: z.number('A number.').min(0, 'Not negative.').max(1e9).default(0.5),
		rlDevMode: z.enum(['fraction-of-cell', 'absolute']).default('fraction-of-cell')
	})
	.refine((f) => f.sizeMode === 'off' || f.sizeMin < f.sizeMax, { message: 'The smallest expected size must be below the largest.', path: ['sizeMax'] });
export type ProfileForm = z.infer<typeof profileFormSchema>;

export const batchRepairFormSchema = z.object({ recipe: z.string().max(20).default('standard') });

/** The stored rules as the form's fields. */
export function profileFormFromRules(rules: GateRules): ProfileForm {
	return {
		closed: rules.closed,
		manifold: rules.manifold,
		outwardOriented: rules.outwardOriented,
		noSelfIntersections: rules.noSelfIntersections,
		minEdgeValue: rules.minEdgeLength?.value ?? null,
		minEdgeMode: rules.minEdgeLength?.mode ?? 'fraction-of-cell',
		maxShells: rules.maxShells,
		expectedGenus: rules.expectedGenus,
		maxDegenerateFaces: rules.maxDegenerateFaces,
		sizeMode: rules.expectedSize?.mode ?? 'off',
		sizeMin: rules.expectedSize?.min ?? SIZE_IN_CELLS.min,
		sizeMax: rules.expectedSize?.max ?? SIZE_IN_CELLS.max,
		minWallGapCells: rules.minWallGapCells,
		rlVolume: rules.repairLimits.maxVolumeChangePercent,
		rlArea: rules.repairLimits.maxAreaChangePercent,
		rlFaces: rules.repairLimits.maxFaceChangePercent,
		rlDevValue: rules.repairLimits.maxDeviation.value,
		rlDevMode: rules.repairLimits.maxDeviation.mode
	};
}

/** The form's fields as rules to store (checked again by gateRulesSchema before saving). */
export function rulesFromProfileForm(f: ProfileForm): unknown {
	return {
		closed: f.closed,
		manifold: f.manifold,
		outwardOriented: f.outwardOriented,
		noSelfIntersections: f.noSelfIntersections,
		minEdgeLength: f.minEdgeValue === null ? null : { mode: f.minEdgeMode, value: f.minEdgeValue },
		maxShells: f.maxShells,
		expectedGenus: f.expectedGenus,
		maxDegenerateFaces: f.maxDegenerateFaces,
		expectedSize: f.sizeMode === 'off' ? null : { mode: f.sizeMode, min: f.sizeMin, max: f.sizeMax },
		minWallGapCells: f.minWallGapCells,
		repairLimits: {
			maxVolumeChangePercent: f.rlVolume,
			maxAreaChangePercent: f.rlArea,
			maxFaceChangePercent: f.rlFaces,
			maxDeviation: { mode: f.rlDevMode, value: f.rlDevValue }
		}
	};
}
