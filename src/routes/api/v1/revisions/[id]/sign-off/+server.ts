import { json } from '@sveltejs/kit';
import { handleApi, parseId } from '$lib/server/api/respond';
import { requireRole } from '$lib/server/auth';
import { getDb } from '$lib/server/db';
import { parseOverride } from '$lib/server/repair-limits';
import { DomainError } from '$lib/domain-error';
import { signOff } from '$lib/server/decisions';
import { loadRevisionForUser } from '$lib/server/revisions';
import type { RequestHandler } from './$types';

/**
 * Signs a revision off: body `{ "note": "...", "override": { "reason": "..." } }`, both optional.
 * A repair outside its repair limits needs the override with a reason (409 without one).
 */
export const POST: RequestHandler = ({ locals, params, request }) =>
	handleApi(async () => {
		const u = requireRole(locals, 'reviewer');
		let body: { note?: unknown; override?: unknown } = {};
		const text = await request.text();
		if (text.trim()) {
			try {
				body = JSON.parse(text);
			} catch {
				throw new DomainError('invalid', 'Send the sign-off as JSON: {"note": "...", "override": {"reason": "..."}}.');
			}
		}
		if (body.override !== undefined && !parseOverride(body.override)) throw new DomainError('invalid', 'An override needs a reason: {"override": {"reason": "..."}}.');
		const db = getDb();
		const note = typeof body.note === 'string' ? body.note.slice(0, 1000) : null;
		const id = await signOff(db, u, await loadRevisionForUser(db, u, parseId(params.id)), note || null, parseOverride(body.override));
		return json({ decisionId: id, clearance: `/api/v1/revisions/${parseId(params.id)}/clearance` }, { status: 201 });
	});
