import { json } from '@sveltejs/kit';
import { handleApi, parseId } from '$lib/server/api/respond';
import { requireRole } from '$lib/server/auth';
import { getDb } from '$lib/server/db';
import { loadRunForUser, runSummary } from '$lib/server/runs';
import type { RequestHandler } from './$types';

/** A run's summary: counts by state, parts, iterations, and links. */
export const GET: RequestHandler = ({ locals, params }) =>
	handleApi(async () => {
		const u = requireRole(locals);
		const db = getDb();
		return json(await runSummary(db, await loadRunForUser(db, u, parseId(params.id, 'run'))));
	});
