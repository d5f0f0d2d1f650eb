import { json } from '@sveltejs/kit';
import { handleApi, parseId } from '$lib/server/api/respond';
import { requireRole } from '$lib/server/auth';
import { getDb } from '$lib/server/db';
import { revisionDetail } from '$lib/server/revision-detail';
import type { RequestHandler } from './$types';

/** Status, check progress, report, rule results and decisions of one revision. */
export const GET: RequestHandler = ({ locals, params, url }) =>
	handleApi(async () => {
		const u = requireRole(locals);
		const d = await revisionDetail(getDb(), u, parseId(params.id), { withReport: url.searchParams.get('report') !== '0' });
		return json(d);
	});
