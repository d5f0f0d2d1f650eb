import { handleApi, parseId } from '$lib/server/api/respond';
import { datasetResponse } from '$lib/server/api/dataset-response';
import { requireRole } from '$lib/server/auth';
import { PERMISSIONS } from '$lib/permissions';
import type { RequestHandler } from './$types';

/** The run's signed-off revisions: `?format=csv` (default), `jsonl`, or `zip` (the meshes with both manifests). */
export const GET: RequestHandler = ({ locals, params, url }) =>
	handleApi(async () => datasetResponse(requireRole(locals, ...PERMISSIONS['export-dataset']), { kind: 'run', id: parseId(params.id, 'run') }, url));
