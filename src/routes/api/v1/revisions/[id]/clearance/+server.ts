import { json } from '@sveltejs/kit';
import { handleApi, parseId } from '$lib/server/api/respond';
import { requireRole } from '$lib/server/auth';
import { clearanceRecord } from '$lib/server/clearance';
import { getDb } from '$lib/server/db';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = ({ locals, params }) =>
	handleApi(async () => {
		const u = requireRole(locals);
		const record = await clearanceRecord(getDb(), u, parseId(params.id));
		return json(record, { headers: { 'content-disposition': `attachment; filename="clearance-${record.part.slug}-rev${record.revision.number}.json"` } });
	});
