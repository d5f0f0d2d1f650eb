import { json } from '@sveltejs/kit';
import { handleApi } from '$lib/server/api/respond';
import { requireRole } from '$lib/server/auth';
import { config } from '$lib/server/config';
import { getDb } from '$lib/server/db';
import { HttpError, ingestRevision } from '$lib/server/revisions';
import { receiveMultipart } from '$lib/server/upload';
import { discard } from '$lib/server/storage';
import type { RequestHandler } from './$types';

/** Upload one mesh (multipart field `file`) as a new revision of a part; the part is created on first use. */
export const POST: RequestHandler = ({ locals, params, request }) =>
	handleApi(async () => {
		const u = requireRole(locals, 'designer', 'engineer');
		const body = await receiveMultipart(request, config.uploadLimitBytes);
		const file = body.files.find((f) => f.field === 'file');
		const extra = body.files.filter((f) => f !== file);
		await Promise.all(extra.map((f) => discard(f.spooled)));
		if (!file) throw new HttpError(400, 'No file: send the mesh in a multipart field named "file".');
		const viaApi = request.headers.has('authorization');
		const res = await ingestRevision(getDb(), {
			user: u,
			projectSlug: params.project,
			partSlug: params.part,
			partName: body.fields.partName,
			fileName: file.fileName,
			spooled: file.spooled,
			source: viaApi ? 'api' : 'upload',
			note: body.fields.note ?? null
		});
		return json(
			{
				id: res.revisionId,
				number: res.number,
				status: res.status,
				duplicateOf: res.duplicateOf,
				links: { self: `/api/v1/revisions/${res.revisionId}`, file: `/api/v1/revisions/${res.revisionId}/file`, page: `/revisions/${res.revisionId}` }
			},
			{ status: res.duplicateOf ? 200 : 201 }
		);
	});
