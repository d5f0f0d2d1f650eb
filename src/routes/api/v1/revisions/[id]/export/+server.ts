import { handleApi, parseId } from '$lib/server/api/respond';
import { requireRole } from '$lib/server/auth';
import { config } from '$lib/server/config';
import { getDb } from '$lib/server/db';
import { CheckRefused, runEngine } from '$lib/server/jobs/check';
import { DomainError } from '$lib/domain-error';
import { loadRevisionForUser } from '$lib/server/revisions';
import { getStore } from '$lib/server/storage';
import type { RequestHandler } from './$types';

const FORMATS = { stl: 'binary STL', ply: 'binary PLY', obj: 'OBJ', 'feature-edges': 'OBJ line elements of the sharp feature edges' } as const;

/** The revision's surface converted to binary STL, binary PLY or OBJ, or its sharp feature edges as OBJ lines (in a worker thread). */
export const GET: RequestHandler = ({ locals, params, url }) =>
	handleApi(async () => {
		const u = requireRole(locals);
		const format = url.searchParams.get('format') ?? 'stl';
		if (!Object.hasOwn(FORMATS, format)) throw new DomainError('invalid', `Unknown format "${format.slice(0, 20)}": use stl, ply, obj or feature-edges.`);
		const { rev, part } = await loadRevisionForUser(getDb(), u, parseId(params.id));
		const bytes = await getStore().read(rev.sha256);
		let out: Uint8Array;
		try {
			out = await runEngine<Uint8Array>({ task: 'export', bytes, fileName: rev.fileName, format: format as 'stl', maxFaces: config.maxFaces }, { timeLimitMs: config.checkTimeLimitMs, memoryLimitMb: config.checkMemoryLimitMb }, () => {});
		} catch (e) {
			if (e instanceof CheckRefused) throw new DomainError('invalid', `This revision's file cannot be read: ${e.message}`, 'unreadable-file');
			throw e;
		}
		const name = format === 'feature-edges' ? `${part.slug}-rev${rev.number}-feature-edges.obj` : `${part.slug}-rev${rev.number}.${format}`;
		return new Response(out as BodyInit, {
			headers: { 'content-type': 'application/octet-stream', 'content-disposition': `attachment; filename="${name}"`, 'x-content-type-options': 'nosniff' }
		});
	});
