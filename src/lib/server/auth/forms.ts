import { z } from 'zod';

export const signInSchema = z.object({
	email: z.email('Enter the e-mail address of your account.').max(254).transform((s) => s.trim().toLowerCase()),
	password: z.string().min(1, 'Enter your password.').max(200)
});

export const setPasswordSchema = z
	.object({
		password: z.string().min(10, 'Use at least 10 characters.').max(200, 'At most 200 characters.'),
		confirm: z.string()
	})
	.refine((v) => v.password === v.confirm, { message: 'The two passwords differ.', path: ['confirm'] });

export const resetRequestSchema = z.object({
	email: z.email('Enter an e-mail address.').max(254).transform((s) => s.trim().toLowerCase())
});

export const inviteSchema = z.object({
	email: z.email('Enter an e-mail address.').max(254).transform((s) => s.trim().toLowerCase()),
	name: z.string().trim().min(1, 'Enter a name.').max(120),
	roles: z.array(z.enum(['admin', 'engineer', 'designer', 'reviewer'])).min(1, 'Pick at least one role.')
});
