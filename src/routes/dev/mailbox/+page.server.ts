import { error } from '@sveltejs/kit';
import { config } from '$lib/server/config';
import { readMailbox } from '$lib/server/mailbox';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async () => {
	// Only where the development mail catcher runs (npm start and the tests); a 404 everywhere else.
	if (!config.devMailbox) error(404, 'Not found');
	return { mails: await readMailbox() };
};
