import { error } from '@sveltejs/kit';
import { raiseForPage } from '$lib/server/errors';
import { requireRole } from '$lib/server/auth';
import { clearanceRecord } from '$lib/server/clearance';
import { getDb } from '$lib/server/db';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, params }) => {
	const me = requireRole(locals);
	if (!/^\d{1,10}$/.test(params.id)) error(404, 'No such revision.');
	try {
		return { record: await clearanceRecord(getDb(), me, Number(params.id)) };
	} catch (e) {
		raiseForPage(e);
	}
};
