import { z } from 'zod';

/** What the queue's action bar (and POST /api/v1/queue/bulk) can do to many revisions at once. */
export const BULK_ACTIONS = ['assign', 'recheck', 'return', 'sign-off'] as const;
export type BulkAction = (typeof BULK_ACTIONS)[number];
export const BULK_ACTION_LABEL: Record<BulkAction, string> = { assign: 'Assign', recheck: 'Check again', return: 'Return to the designer', 'sign-off': 'Sign off' };
export const BULK_MAX = 200;

export const bulkSchema = z
	.object({
		action: z.enum(BULK_ACTIONS, { error: 'Pick what to do with the selected revisions.' }),
		revisionIds: z
			.array(z.coerce.number().int().positive())
			.min(1, 'Tick at least one revision.')
			.max(BULK_MAX, `At most ${BULK_MAX} revisions at once.`),
		/** For assign: the person's id, or empty for nobody. */
		assignee: z.string().max(32).default(''),
		/** For return: one reason for all of them, as the designer will read it. */
		reason: z.string().trim().max(1000, 'At most 1000 characters.').default(''),
		/** For sign-off: an optional note on each decision. */
		note: z.string().trim().max(1000, 'At most 1000 characters.').default('')
	})
	.superRefine((v, ctx) => {
		if (v.action === 'return' && !v.reason) ctx.addIssue({ code: 'custom', path: ['reason'], message: 'Say why they go back, so the designer knows what to change.' });
	});
export type BulkInput = z.infer<typeof bulkSchema>;
