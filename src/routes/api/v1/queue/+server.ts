import { json } from '@sveltejs/kit';
import { handleApi } from '$lib/server/api/respond';
import { requireRole } from '$lib/server/auth';
import { getDb } from '$lib/server/db';
import { parseQueueFilter, queryQueue } from '$lib/server/queue-view';
import type { RequestHandler } from './$types';

/** The triage queue with the page's filters: project, status, assignee, rule, thinUnder, sort (age, severity, size, thin), dir, page, pageSize. */
export const GET: RequestHandler = ({ locals, url }) =>
	handleApi(async () => {
		const u = requireRole(locals);
		return json(await queryQueue(getDb(), u, parseQueueFilter(url.searchParams)));
	});
