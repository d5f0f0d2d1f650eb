import { redirect, type Handle, type HandleServerError } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { getLucia, hashToken, loadSessionUser } from '$lib/server/auth';
import { accessFor } from '$lib/server/auth/guard';
import { getDb } from '$lib/server/db';
import { apiToken } from '$lib/server/db/schema';
import { startBackground } from '$lib/server/background';
import { loggable } from '$lib/server/api/respond';
import { crossSiteRefusal } from '$lib/server/csrf';
import { DATABASE_DOWN_MESSAGE, isDatabaseDown } from '$lib/server/errors';

startBackground();

function json(status: number, message: string): Response {
	return new Response(JSON.stringify({ message }), {
		status,
		headers: { 'content-type': 'application/json; charset=utf-8' }
	});
}

async function authenticate(event: Parameters<Handle>[0]['event']) {
	event.locals.user = null;
	event.locals.session = null;
	const db = getDb();
	const bearer = event.request.headers.get('authorization');
	if (bearer?.startsWith('Bearer ') && event.url.pathname.startsWith('/api/')) {
		const token = bearer.slice(7).trim();
		// Looked up whether revoked or not, so a revoked token is told so rather than "unknown".
		const [row] = await db.select().from(apiToken).where(eq(apiToken.tokenHash, hashToken(token))).limit(1);
		if (!row) event.locals.tokenProblem = { kind: 'unknown' };
		else if (row.revokedAt) {
			event.locals.tokenProblem = { kind: 'revoked', at: row.revokedAt };
			return;
		} else if (row.expiresAt && row.expiresAt.getTime() <= Date.now()) {
			event.locals.tokenProblem = { kind: 'expired', at: row.expiresAt };
			return;
		}
		if (row) {
			event.locals.user = await loadSessionUser(db, row.userId);
			// Last use is informative only (shown to the minute), so it is written at most once a
			// minute per token rather than on every call of a polling pipeline; a lost update is harmless.
			if (!row.lastUsedAt || Date.now() - row.lastUsedAt.getTime() > 60_000) {
				void db.update(apiToken).set({ lastUsedAt: new Date() }).where(eq(apiToken.id, row.id)).catch(() => {});
			}
		}
		return;
	}
	const lucia = getLucia();
	const sessionId = event.cookies.get(lucia.sessionCookieName);
	if (!sessionId) return;
	const { session, user } = await lucia.validateSession(sessionId);
	const secure = event.url.protocol === 'https:';
	if (session && session.fresh) {
		const c = lucia.createSessionCookie(session.id);
		event.cookies.set(c.name, c.value, { ...c.attributes, secure, path: '/' });
	}
	if (!session) {
		const c = lucia.createBlankSessionCookie();
		event.cookies.set(c.name, c.value, { ...c.attributes, secure, path: '/' });
		return;
	}
	event.locals.session = session;
	event.locals.user = user ? await loadSessionUser(db, user.id) : null;
}

function unauthenticatedMessage(p: App.Locals['tokenProblem']): string {
	if (p?.kind === 'revoked') {
		return `This API token was revoked (${p.at.toISOString().slice(0, 16).replace('T', ' ')} UTC) and no longer works. Create a new one under Settings & API tokens and give it to the pipeline.`;
	}
	if (p?.kind === 'expired') {
		return `This API token expired (${p.at.toISOString().slice(0, 16).replace('T', ' ')} UTC) and no longer works. Create a new one under Settings & API tokens and give it to the pipeline.`;
	}
	if (p?.kind === 'unknown') {
		return 'This API token is not known to Shellgate: check that the pipeline sends it whole (it starts with "sg_"), or create a new one under Settings & API tokens.';
	}
	return 'Authentication required: send a session cookie or an "Authorization: Bearer" API token.';
}

export const handle: Handle = async ({ event, resolve }) => {
	const path = event.url.pathname;
	if (path.startsWith('/_app/') || path === '/favicon.svg') return resolve(event);
	const isApi = path.startsWith('/api/');
	const refused = crossSiteRefusal(event.request, event.url, !!event.cookies.get(getLucia().sessionCookieName));
	if (refused) return isApi ? json(403, refused) : new Response(refused, { status: 403, headers: { 'content-type': 'text/plain; charset=utf-8' } });
	try {
		await authenticate(event);
	} catch (e) {
		if (isDatabaseDown(e)) {
			return isApi ? json(503, DATABASE_DOWN_MESSAGE) : new Response(DATABASE_DOWN_MESSAGE, { status: 503, headers: { 'content-type': 'text/plain; charset=utf-8' } });
		}
		throw e;
	}
	const access = accessFor(path);
	const u = event.locals.user;
	if (access !== 'public') {
		if (!u) {
			if (isApi) return json(401, unauthenticatedMessage(event.locals.tokenProblem));
			redirect(303, `/sign-in?next=${encodeURIComponent(path + event.url.search)}`);
		}
		// Pages lacking the role are refused by their layout's requireRole (so the app's error page
		// renders); API routes are refused here.
		if (Array.isArray(access) && !access.some((r) => u.roles.includes(r)) && isApi) {
			return json(403, `This route needs the ${access.join(' or ')} role.`);
		}
	}
	const response = await resolve(event);
	response.headers.set('x-content-type-options', 'nosniff');
	response.headers.set('referrer-policy', 'same-origin');
	response.headers.set('x-frame-options', 'DENY');
	return response;
};

export const handleError: HandleServerError = ({ error: err, status, message }) => {
	if (isDatabaseDown(err)) {
		return { message: DATABASE_DOWN_MESSAGE };
	}
	if (status >= 500) console.error('[shellgate] unexpected error:', loggable(err));
	return { message: status >= 500 ? 'Something went wrong on the server. It has been logged.' : message };
};
