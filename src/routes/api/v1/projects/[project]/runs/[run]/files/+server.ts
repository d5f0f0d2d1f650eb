import { handleApi } from '$lib/server/api/respond';
import { receiveUpload, uploadAnswer } from '$lib/server/api/run-upload';
import { requireRole } from '$lib/server/auth';
import { getDb } from '$lib/server/db';
import { ingestRunFile } from '$lib/server/runs';
import type { RequestHandler } from './$types';

/**
 * Upload one mesh into the run named in the address (created on first use, kind from `runKind` /
 * X-Shellgate-Run-Kind, samples when not given). The part: `part` (field, query parameter or
 * X-Shellgate-Part header), else `part` in the metadata, else, for a samples run, the file name.
 * An iterations run needs the part named and keeps every file on it.
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
				runName: params.run,
				runKind: up.runKind ?? url.searchParams.get('kind'),
				partSlug: up.part,
				partName: up.partName,
				fileName: up.fileName,
				spooled: up.spooled,
				meta: up.meta,
				source: viaApi ? 'api' : 'upload',
				note: up.note
			})
		);
	});
