import { json } from '@sveltejs/kit';
import { handleApi } from '$lib/server/api/respond';
import { requireRole } from '$lib/server/auth';
import { config } from '$lib/server/config';
import { getDb } from '$lib/server/db';
import { ingestRevision, type IngestResult } from '$lib/server/ingest';
import { DomainError } from '$lib/domain-error';
import { bodyRefusal, receiveMultipart, refusableBody } from '$lib/server/upload';
import { discard, spool, UploadTooLargeError } from '$lib/server/storage';
import type { RequestHandler } from './$types';

/** Upload one mesh (multipart field `file`) as a new revision of a part; the part is created on first use. */
function created(res: IngestResult): Response {
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
}

/**
 * Multipart (field `file`; from browsers, which the origin check in hooks covers, or from pipelines with a bearer token) or a raw
 * application/octet-stream body with ?fileName= (for pipelines).
 */
export const POST: RequestHandler = ({ locals, params, request, url }) =>
	handleApi(async () => {
		const u = requireRole(locals, 'designer', 'engineer');
		const viaApi = request.headers.has('authorization');
		const type = (request.headers.get('content-type') ?? '').toLowerCase();
		if (type.startsWith('application/octet-stream')) {
			// Raw body: the simplest form for pipelines (no multipart, no Origin header needed).
			const fileName = url.searchParams.get('fileName') ?? request.headers.get('x-file-name') ?? '';
			if (!fileName) throw new DomainError('invalid', 'Name the file: add ?fileName=pod.stl to the address (or an X-File-Name header).');
			if (!request.body) throw new DomainError('invalid', 'The request has no body.');
			const declared = Number(request.headers.get('content-length') ?? NaN);
			if (Number.isFinite(declared) && declared > config.uploadLimitBytes) throw new DomainError('invalid', new UploadTooLargeError(config.uploadLimitBytes).message, 'too-large');
			let spooled;
			try {
				spooled = await spool(refusableBody(request.body), config.uploadLimitBytes);
			} catch (e) {
				throw bodyRefusal(e);
			}
			return created(
				await ingestRevision(getDb(), { user: u, projectSlug: params.project, partSlug: params.part, partName: url.searchParams.get('partName') ?? undefined, fileName, spooled, source: viaApi ? 'api' : 'upload', note: url.searchParams.get('note') })
			);
		}
		const body = await receiveMultipart(request, config.uploadLimitBytes);
		const file = body.files.find((f) => f.field === 'file');
		const extra = body.files.filter((f) => f !== file);
		await Promise.all(extra.map((f) => discard(f.spooled)));
		if (!file) throw new DomainError('invalid', 'No file: send the mesh in a multipart field named "file".');
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
		return created(res);
	});
