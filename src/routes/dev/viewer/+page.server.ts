import { error } from '@sveltejs/kit';
import { config } from '$lib/server/config';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = () => {
	// Development harness for the mesh viewer: same switch as the dev mailbox, a 404 everywhere else.
	if (!config.devMailbox) error(404, 'Not found');
	return {};
};
