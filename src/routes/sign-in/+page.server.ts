import { fail, redirect } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import {
	clearSignInFailures,
	getLucia,
	recordSignInFailure,
	signInBlocked,
	verifyPassword
} from '$lib/server/auth';
import { signInSchema } from '$lib/server/auth/forms';
import { getDb } from '$lib/server/db';
import { user } from '$lib/server/db/schema';
import type { Actions, PageServerLoad } from './$types';

function safeNext(next: string | null): string {
	return next && next.startsWith('/') && !next.startsWith('//') ? next : '/queue';
}

export const load: PageServerLoad = async ({ locals, url }) => {
	if (locals.user) redirect(303, safeNext(url.searchParams.get('next')));
	return { form: await superValidate(zod4(signInSchema)) };
};

export const actions: Actions = {
	default: async ({ request, cookies, url, getClientAddress }) => {
		const form = await superValidate(request, zod4(signInSchema));
		if (!form.valid) return fail(400, { form });
		const db = getDb();
		const { email, password } = form.data;
		const address = getClientAddress();
		const blocked = await signInBlocked(db, email, address);
		if (blocked) return message(form, blocked, { status: 429 });
		const [u] = await db.select().from(user).where(eq(user.email, email)).limit(1);
		const ok = !!u && !u.disabled && !!u.passwordHash && (await verifyPassword(u.passwordHash, password));
		if (!ok) {
			await recordSignInFailure(db, email, address);
			form.data.password = '';
			return message(form, 'That e-mail and password do not match an active account.', { status: 400 });
		}
		await clearSignInFailures(db, email);
		const lucia = getLucia();
		const session = await lucia.createSession(u.id, {});
		const c = lucia.createSessionCookie(session.id);
		cookies.set(c.name, c.value, { ...c.attributes, secure: url.protocol === 'https:', path: '/' });
		redirect(303, safeNext(url.searchParams.get('next')));
	}
};
