import { handleApi } from '$lib/server/api/respond';
import { receiveUpload, uploadAnswer } from '$lib/server/api/run-upload';
import { requireRole } from '$lib/server/auth';
import { getDb } from '$lib/server/db';
import { ingestRunFile } from '$lib/server/runs';
import type { RequestHandler } from './$types';

/**
 * Upload one mesh as a new revision of the part in the address; the part is created on first use.
 * Multipart (field `file`; from browsers, which the origin check in hooks covers, or from pipelines
 * with a bearer token) or a raw application/octet-stream body with ?fileName= (for pipelines).
 * Optionally in a generator run (`run`/`runKind` fields or X-Shellgate-Run / X-Shellgate-Run-Kind
 * headers) with per-file metadata (`meta` field or X-Shellgate-Meta header, a JSON object).
 */
export const POST: RequestHandler = ({ locals, params, request, url }) =>
	handleApi(async () => {
		const u = requireRole(locals, 'designer', 'engineer');
		const viaApi = request.headers.has('authorization');
		const up = await receiveUpload(request, url);
		return uploadAnswer(
			await ingestRunFile(getDb(), {
				user: u,
				projectSlug: params.project,
				runName: up.run,
				runKind: up.runKind,
				partSlug: params.part,
				partName: up.partName,
				fileName: up.fileName,
				spooled: up.spooled,
				meta: up.meta,
				source: viaApi ? 'api' : 'upload',
				note: up.note
			})
		);
	});
