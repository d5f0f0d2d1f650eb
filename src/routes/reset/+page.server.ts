import { fail } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { resetRequestSchema } from '$lib/server/auth/forms';
import { createPasswordLink } from '$lib/server/auth/password-links';
import { getDb } from '$lib/server/db';
import { user } from '$lib/server/db/schema';
import { queueMail, simpleMail } from '$lib/server/mail';
import type { Actions, PageServerLoad } from './$types';

const SENT = 'If that address belongs to an account, a reset link is on its way. It works for one hour.';

export const load: PageServerLoad = async () => ({ form: await superValidate(zod4(resetRequestSchema)) });

export const actions: Actions = {
	default: async ({ request }) => {
		const form = await superValidate(request, zod4(resetRequestSchema));
		if (!form.valid) return fail(400, { form });
		const db = getDb();
		const [u] = await db.select().from(user).where(eq(user.email, form.data.email)).limit(1);
		// The answer is the same whether or not the account exists, so the form cannot be used to probe addresses.
		if (u && !u.disabled) {
			await db.transaction(async (tx) => {
				const link = await createPasswordLink(tx, u.id, 'reset');
				await queueMail(tx, simpleMail(u.email, 'Reset your Shellgate password', [
					`Hello ${u.name},`,
					'Someone (hopefully you) asked to reset your Shellgate password. If it was not you, ignore this mail.'
				], { href: link, label: 'Choose a new password' }));
			});
		}
		return message(form, SENT);
	}
};
