import { json } from '@sveltejs/kit';
import { handleApi } from '$lib/server/api/respond';
import { requireRole } from '$lib/server/auth';
import { bulkSchema } from '$lib/bulk-form';
import { bulkAct } from '$lib/server/bulk';
import { getDb } from '$lib/server/db';
import { DomainError } from '$lib/domain-error';
import type { RequestHandler } from './$types';

/**
 * One decision on many revisions: body `{ "action": "assign" | "recheck" | "return" | "sign-off",
 * "revisionIds": [1, 2, …], "assignee": "<user id or empty>", "reason": "…" (return), "note": "…" (sign-off) }`.
 * Each revision is decided on its own, with every rule of its own page; the answer (200) lists
 * `done` and `refused` (each with its `reason`), so a refusal is never silent.
 */
export const POST: RequestHandler = ({ locals, request }) =>
	handleApi(async () => {
		const u = requireRole(locals);
		let body: unknown;
		try {
			body = JSON.parse(await request.text());
		} catch {
			throw new DomainError('invalid', 'Send the request as JSON: {"action": "sign-off", "revisionIds": [1, 2]}.');
		}
		const input = bulkSchema.parse(body);
		return json(await bulkAct(getDb(), u, input));
	});
