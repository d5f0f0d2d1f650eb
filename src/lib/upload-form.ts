import { z } from 'zod';

export const uploadSchema = z.object({
	project: z.string().min(1, 'Pick a project.').max(64),
	part: z
		.string()
		.trim()
		.toLowerCase()
		.regex(/^[a-z0-9][a-z0-9-]{0,63}$/, 'Use lower-case letters, digits and dashes, e.g. side-scan-pod.'),
	note: z.string().max(500, 'At most 500 characters.').default('')
});
