// Reading one uploaded mesh with its run and metadata from a request: a multipart body (field `file`
// plus fields `run`, `runKind`, `meta`, `part`, `partName`, `note`) or a raw application/octet-stream
// body (?fileName=…). Headers X-Shellgate-Run, X-Shellgate-Run-Kind, X-Shellgate-Meta and
// X-Shellgate-Part say the same for either form; a field wins over its header.
import { json } from '@sveltejs/kit';
import { config } from '../config';
import { DomainError } from '../../domain-error';
import type { RunFileResult } from '../runs';
import { discard, spool, UploadTooLargeError, type Spooled } from '../storage';
import { bodyRefusal, receiveMultipart, refusableBody } from '../upload';

export interface ReceivedUpload {
	fileName: string;
	spooled: Spooled;
	run: string | null;
	runKind: string | null;
	meta: string | null;
	part: string | null;
	partName: string | undefined;
	note: string | null;
}

const orNull = (s: string | null | undefined) => (s == null || s.trim() === '' ? null : s);

/** The one file of the request, spooled, and what was said about it. Refuses a request with no file or, with `single`, more than one. */
export async function receiveUpload(request: Request, url: URL): Promise<ReceivedUpload> {
	const h = request.headers;
	const headerSays = { run: orNull(h.get('x-shellgate-run')), runKind: orNull(h.get('x-shellgate-run-kind')), meta: orNull(h.get('x-shellgate-meta')), part: orNull(h.get('x-shellgate-part')) };
	const type = (h.get('content-type') ?? '').toLowerCase();
	if (type.startsWith('application/octet-stream')) {
		// Raw body: the simplest form for pipelines (no multipart, no Origin header needed).
		const fileName = url.searchParams.get('fileName') ?? h.get('x-file-name') ?? '';
		if (!fileName) throw new DomainError('invalid', 'Name the file: add ?fileName=pod.stl to the address (or an X-File-Name header).');
		if (!request.body) throw new DomainError('invalid', 'The request has no body.');
		const declared = Number(h.get('content-length') ?? NaN);
		if (Number.isFinite(declared) && declared > config.uploadLimitBytes) throw new DomainError('invalid', new UploadTooLargeError(config.uploadLimitBytes).message, 'too-large');
		let spooled;
		try {
			spooled = await spool(refusableBody(request.body), config.uploadLimitBytes);
		} catch (e) {
			throw bodyRefusal(e);
		}
		const q = url.searchParams;
		return {
			fileName,
			spooled,
			run: orNull(q.get('run')) ?? headerSays.run,
			runKind: orNull(q.get('runKind')) ?? headerSays.runKind,
			meta: orNull(q.get('meta')) ?? headerSays.meta,
			part: orNull(q.get('part')) ?? headerSays.part,
			partName: q.get('partName') ?? undefined,
			note: q.get('note')
		};
	}
	const body = await receiveMultipart(request, config.uploadLimitBytes);
	const file = body.files.find((f) => f.field === 'file');
	const extra = body.files.filter((f) => f !== file);
	await Promise.all(extra.map((f) => discard(f.spooled)));
	if (!file) throw new DomainError('invalid', 'No file: send the mesh in a multipart field named "file".');
	const f = body.fields;
	return {
		fileName: file.fileName,
		spooled: file.spooled,
		run: orNull(f.run) ?? headerSays.run,
		runKind: orNull(f.runKind) ?? headerSays.runKind,
		meta: orNull(f.meta) ?? headerSays.meta,
		part: orNull(f.part) ?? headerSays.part,
		partName: f.partName,
		note: f.note ?? null
	};
}

const OUTCOME_WORDS: Record<RunFileResult['outcome'], string> = {
	'created-part': 'created the part with its first revision',
	'new-revision': 'added a new revision to the existing part',
	duplicate: 'found the same file on this part already; nothing new was stored'
};

/** The answer to an upload: the revision, and in words and fields what it did (run, part, outcome). */
export function uploadAnswer(res: RunFileResult): Response {
	return json(
		{
			id: res.revisionId,
			number: res.number,
			status: res.status,
			duplicateOf: res.duplicateOf,
			run: res.run,
			iteration: res.iteration,
			part: { slug: res.partSlug, project: res.projectSlug, created: res.outcome === 'created-part' },
			outcome: res.outcome,
			message: `Rev ${res.number} of ${res.partSlug}: ${OUTCOME_WORDS[res.outcome]}${res.run ? ` (run "${res.run.name}", ${res.run.kind}${res.run.created ? ', created by this upload' : ''})` : ''}.`,
			links: {
				self: `/api/v1/revisions/${res.revisionId}`,
				file: `/api/v1/revisions/${res.revisionId}/file`,
				page: `/revisions/${res.revisionId}`,
				...(res.run ? { run: `/api/v1/runs/${res.run.id}`, runPage: `/runs/${res.run.id}` } : {})
			}
		},
		{ status: res.duplicateOf ? 200 : 201 }
	);
}
