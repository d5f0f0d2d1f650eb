import { redirect } from '@sveltejs/kit';
import { getLucia } from '$lib/server/auth';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = () => redirect(303, '/sign-in');

export const actions: Actions = {
	default: async ({ locals, cookies, url }) => {
		const lucia = getLucia();
		if (locals.session) await lucia.invalidateSession(locals.session.id);
		const c = lucia.createBlankSessionCookie();
		cookies.set(c.name, c.value, { ...c.attributes, secure: url.protocol === 'https:', path: '/' });
		redirect(303, '/sign-in');
	}
};
