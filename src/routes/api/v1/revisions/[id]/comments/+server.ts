import { json } from '@sveltejs/kit';
import { handleApi, parseId } from '$lib/server/api/respond';
import { requireRole } from '$lib/server/auth';
import { addComment, commentSchema } from '$lib/server/comments';
import { getDb } from '$lib/server/db';
import { DomainError } from '$lib/domain-error';
import type { RequestHandler } from './$types';

/** Adds a comment, optionally pinned to a point (and face) on the surface. */
export const POST: RequestHandler = ({ locals, params, request }) =>
	handleApi(async () => {
		const u = requireRole(locals);
		let body: unknown;
		try {
			body = await request.json();
		} catch {
			throw new DomainError('invalid', 'Send the comment as JSON: {"body": "...", "point": [x, y, z], "face": 12}.');
		}
		const c = await addComment(getDb(), u, parseId(params.id), commentSchema.parse(body));
		return json(c, { status: 201 });
	});
