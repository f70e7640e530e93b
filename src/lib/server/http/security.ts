// Browser-facing protections applied by hooks.server.ts: the CSRF origin check and the security
// headers (Content-Security-Policy, X-Content-Type-Options, Referrer-Policy, framing).

// --- CSRF origin check ------------------------------------------------------------------------------
// This is SvelteKit's own check (kit 2, runtime/server/respond.js), moved into our `handle` so that one
// route can take part of it off: svelte.config.js turns the built-in one off with trustedOrigins ['*'].
// Everything else is refused exactly as SvelteKit would: a POST/PUT/PATCH/DELETE with a form content
// type whose Origin header is missing or not ours.
//
// Why: RFC 6749 §4.4.2 requires the token request to be application/x-www-form-urlencoded, and
// scripts (curl, OAuth client libraries) send no Origin header, which SvelteKit's check refuses. The
// token endpoint takes no cookie and acts only on the client credentials inside the request, so a
// forged cross-site request gains nothing; still, a request that does carry a foreign Origin (a
// browser on another site) is refused there too.

const FORM_CONTENT_TYPES = ['application/x-www-form-urlencoded', 'multipart/form-data', 'text/plain', 'application/x-sveltekit-formdata'];
const UNSAFE_METHODS = ['POST', 'PUT', 'PATCH', 'DELETE'];

/** Routes that accept form posts without an Origin header (non-browser clients). Keep this list tiny. */
export const CSRF_NO_ORIGIN_ALLOWED = new Set(['/api/v1/oauth/token']);

/** Origins (besides our own) allowed to post forms to us. Like SvelteKit's `csrf.trustedOrigins`. */
export const CSRF_TRUSTED_ORIGINS: string[] = [];

export function csrfRefusal(request: Request, url: URL, routeId: string | null): Response | null {
	if (!UNSAFE_METHODS.includes(request.method)) return null;
	const type = (request.headers.get('content-type') ?? '').split(';', 1)[0].trim().toLowerCase();
	if (!FORM_CONTENT_TYPES.includes(type)) return null;
	const origin = request.headers.get('origin');
	if (origin === url.origin) return null;
	if (origin && CSRF_TRUSTED_ORIGINS.includes(origin)) return null;
	if (origin === null && routeId !== null && CSRF_NO_ORIGIN_ALLOWED.has(routeId)) return null;
	const message = `Cross-site ${request.method} form submissions are forbidden`;
	if (request.headers.get('accept') === 'application/json') {
		return new Response(JSON.stringify({ message }), { status: 403, headers: { 'content-type': 'application/json' } });
	}
	return new Response(message, { status: 403, headers: { 'content-type': 'text/plain;charset=UTF-8' } });
}

// --- Content-Security-Policy ----------------------------------------------------------------------
// Pages: SvelteKit writes the policy itself from `kit.csp` in svelte.config.js (mode 'auto': a nonce
// for its inline bootstrap script on every server-rendered page). The directives there are ours:
//   default-src 'self'; script-src 'self' + nonce; style-src 'self' 'unsafe-inline'; img-src 'self' data:;
//   font-src 'self' data:; connect-src 'self'; object-src 'none'; frame-ancestors 'none';
//   form-action 'self'; base-uri 'self'
// 'unsafe-inline' styles: Svelte renders `style=` attributes and charts insert <style> elements; no
// script may run inline.
//
// Everything else gets a policy here: HTML that SvelteKit did not render gets the same self-only page
// policy; any other response (JSON, CSV, files) gets one that allows nothing at all.

export const PAGE_POLICY =
	"default-src 'self'; script-src 'self'; style-src 'self' 'unsafe-inline'; img-src 'self' data:; font-src 'self' data:; " +
	"connect-src 'self'; object-src 'none'; frame-ancestors 'none'; form-action 'self'; base-uri 'self'";

export const NON_HTML_POLICY = "default-src 'none'; frame-ancestors 'none'; base-uri 'none'; form-action 'none'";

/**
 * Per-route policies that replace the default ones, by SvelteKit route id. The only place to relax the
 * policy, and only for the route that needs it. The API docs page (Swagger UI from swagger-ui-dist,
 * served from our own origin) registers its policy here, e.g.:
 *   '/api/docs': "default-src 'self'; script-src 'self' 'unsafe-inline'; style-src 'self' 'unsafe-inline'; " +
 *                "img-src 'self' data:; connect-src 'self'; object-src 'none'; frame-ancestors 'none'; " +
 *                "form-action 'self'; base-uri 'self'"
 * (keep 'unsafe-inline' out of script-src if its bootstrap script is served as a file).
 */
export const ROUTE_POLICIES: Record<string, string> = {};

export function applySecurityHeaders(response: Response, routeId: string | null, https: boolean): void {
	const h = response.headers;
	const override = routeId ? ROUTE_POLICIES[routeId] : undefined;
	if (override) h.set('content-security-policy', override);
	else if (!h.has('content-security-policy')) {
		const html = (h.get('content-type') ?? '').toLowerCase().startsWith('text/html');
		h.set('content-security-policy', html ? PAGE_POLICY : NON_HTML_POLICY);
	}
	h.set('x-content-type-options', 'nosniff');
	h.set('referrer-policy', 'same-origin');
	// Older browsers that ignore frame-ancestors.
	h.set('x-frame-options', 'DENY');
	if (https) h.set('strict-transport-security', 'max-age=31536000');
}
