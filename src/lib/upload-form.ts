import { z } from 'zod';

/** How the files of a batch relate: each its own part, or all revisions of one part. Empty: not said yet. */
export const BATCH_MODES = ['samples', 'iterations'] as const;

export const uploadSchema = z
	.object({
		project: z.string().min(1, 'Pick a project.').max(64),
		part: z.string().trim().toLowerCase().default(''),
		note: z.string().max(500, 'At most 500 characters.').default(''),
		run: z.string().trim().max(120, 'At most 120 characters.').default(''),
		batch: z.enum(['', ...BATCH_MODES]).default('')
	})
	.superRefine((v, ctx) => {
		// A samples batch names each part from its file; otherwise the part is named here.
		if (v.batch !== 'samples' && !/^[a-z0-9][a-z0-9-]{0,63}$/.test(v.part)) {
			ctx.addIssue({ code: 'custom', path: ['part'], message: 'Use lower-case letters, digits and dashes, e.g. side-scan-pod.' });
		}
	});
