// Cross-site request forgery: the origin check on form posts, made here instead of by SvelteKit
// (svelte.config.js explains why).
const FORM_TYPES = ['application/x-www-form-urlencoded', 'multipart/form-data', 'text/plain', 'application/x-sveltekit-formdata'];
const UNSAFE_METHODS = ['POST', 'PUT', 'PATCH', 'DELETE'];

/**
 * The same-origin check on form posts (in place of SvelteKit's, see svelte.config.js): a POST, PUT,
 * PATCH or DELETE with a form content type must come from the app's own origin, unless it is an
 * API request that carries a bearer token and no session cookie. A browser never adds an
 * Authorization header to a cross-site form post, so such a request cannot be forged from a page.
 */
export function crossSiteRefusal(request: Request, url: URL, hasSessionCookie: boolean): string | null {
	if (!UNSAFE_METHODS.includes(request.method)) return null;
	const type = (request.headers.get('content-type') ?? '').split(';', 1)[0].trim().toLowerCase();
	if (!FORM_TYPES.includes(type)) return null;
	if (request.headers.get('origin') === url.origin) return null;
	const bearerOnly = url.pathname.startsWith('/api/') && /^Bearer\s+\S/.test(request.headers.get('authorization') ?? '') && !hasSessionCookie;
	if (bearerOnly) return null;
	return url.pathname.startsWith('/api/')
		? `Cross-site ${request.method} form submissions are refused: send the request from Shellgate itself, or authenticate with an "Authorization: Bearer" API token and no session cookie.`
		: `Cross-site ${request.method} form submissions are refused.`;
}
