import { handleApi, parseId } from '$lib/server/api/respond';
import { requireRole } from '$lib/server/auth';
import { getDb } from '$lib/server/db';
import { loadRevisionForUser } from '$lib/server/revisions';
import { getStore } from '$lib/server/storage';
import { Readable } from 'node:stream';
import type { RequestHandler } from './$types';

/** The stored bytes, as an attachment with a neutral content type (never rendered by the browser). */
export const GET: RequestHandler = ({ locals, params }) =>
	handleApi(async () => {
		const u = requireRole(locals);
		const { rev } = await loadRevisionForUser(getDb(), u, parseId(params.id));
		const body = await getStore().stream(rev.sha256);
		const ascii = rev.fileName.replace(/[^\x20-\x7e]/g, '_').replace(/["\\]/g, '_');
		return new Response(Readable.toWeb(body) as ReadableStream, {
			headers: {
				'content-type': 'application/octet-stream',
				'content-length': String(rev.size),
				'content-disposition': `attachment; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(rev.fileName)}`,
				'x-content-type-options': 'nosniff',
				'cache-control': 'private, max-age=31536000, immutable',
				etag: `"${rev.sha256}"`
			}
		});
	});
