import { z } from 'zod';
import { slugFromName } from './run-meta';

/** How the files of a batch relate: each its own part, or all revisions of one part. Empty: not said yet. */
export const BATCH_MODES = ['samples', 'iterations'] as const;

export const uploadSchema = z
	.object({
		project: z.string().min(1, 'Pick a project.').max(64),
		// A part's address (side-scan-pod) or a name as a person writes it (Side-scan pod): a new name
		// creates the part under that name, its address made from it (slugFromName).
		part: z.string().trim().max(120, 'At most 120 characters.').default(''),
		note: z.string().max(500, 'At most 500 characters.').default(''),
		run: z.string().trim().max(120, 'At most 120 characters.').default(''),
		batch: z.enum(['', ...BATCH_MODES]).default('')
	})
	.superRefine((v, ctx) => {
		// A samples batch names each part from its file; otherwise the part is named here.
		if (v.batch !== 'samples' && !slugFromName(v.part)) {
			ctx.addIssue({ code: 'custom', path: ['part'], message: v.part ? 'Needs a letter or digit, e.g. Side-scan pod.' : 'Name the part, e.g. Side-scan pod.' });
		}
	});
