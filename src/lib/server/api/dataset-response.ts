// The one answer of both dataset routes (a run's and a project's): the format checked, the export
// started (and audited), the body streamed as an attachment.
import type { SessionUser } from '../auth';
import { getDb } from '../db';
import { DATASET_FORMATS, openDatasetExport, resolveDatasetScope, type DatasetFormat, type DatasetScopeInput } from '../dataset-export';
import { DomainError } from '../../domain-error';

export async function datasetResponse(u: SessionUser, scope: DatasetScopeInput, url: URL): Promise<Response> {
	const format = url.searchParams.get('format') ?? 'csv';
	if (!(DATASET_FORMATS as readonly string[]).includes(format)) throw new DomainError('invalid', `Unknown dataset format "${format.slice(0, 20)}": use csv, jsonl or zip.`);
	const db = getDb();
	const s = await resolveDatasetScope(db, u, scope);
	const out = await openDatasetExport(db, u, s, format as DatasetFormat);
	return new Response(out.body, {
		headers: {
			'content-type': out.contentType,
			'content-disposition': `attachment; filename="${out.fileName.replace(/[^\w.-]/g, '_')}"`,
			'x-content-type-options': 'nosniff',
			'cache-control': 'no-store',
			// Signed-off revisions when the export began; the audit trail records what was actually sent.
			'x-shellgate-dataset-rows': String(out.expected)
		}
	});
}
