// Every request passes here once: request id and logging, authentication, the permission table,
// and RFC 9457 problems for everything under /api/.
import { redirect, type Handle, type HandleServerError } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { randomUUID } from 'node:crypto';
import { authenticate } from '$lib/server/auth/authenticate';
import { decide } from '$lib/server/auth/authorize';
import { ruleFor } from '$lib/server/auth/permissions';
import { ApiError, PROBLEM_CONTENT_TYPE, problemResponse, STATUS_TITLES } from '$lib/server/http/problem';
import { applySecurityHeaders, csrfRefusal } from '$lib/server/http/security';
import { config } from '$lib/server/config';
import { logger } from '$lib/server/log';
import { startServices } from '$lib/server/services';
import type { ServerInit } from '@sveltejs/kit';

/** Runs once when the server starts: background services (mail sender, queue worker…). */
export const init: ServerInit = async () => {
	await startServices();
};

const isApi = (path: string) => path.startsWith('/api/');

const requestId: Handle = async ({ event, resolve }) => {
	const incoming = event.request.headers.get('x-request-id');
	const id = incoming && /^[A-Za-z0-9._-]{8,64}$/.test(incoming) ? incoming : randomUUID();
	event.locals.requestId = id;
	event.locals.log = logger.child({ requestId: id });
	const started = performance.now();
	const response = await resolve(event);
	response.headers.set('x-request-id', id);
	event.locals.log.info(
		{ method: event.request.method, path: event.url.pathname, status: response.status, ms: Math.round(performance.now() - started) },
		'request'
	);
	return response;
};

/** API routes that answer errors in a format their standard prescribes instead of RFC 9457. */
const OWN_ERROR_FORMAT = new Set([
	'/api/v1/oauth/token' // RFC 6749 §5.2 JSON errors
]);

const problems: Handle = async ({ event, resolve }) => {
	if (!isApi(event.url.pathname) || OWN_ERROR_FORMAT.has(event.route.id ?? '')) return resolve(event);
	let response: Response;
	try {
		response = await resolve(event);
	} catch (e) {
		response = toProblem(e, event.locals.requestId);
	}
	if (event.locals.apiError) return toProblem(event.locals.apiError, event.locals.requestId);
	if (response.status < 400 || (response.headers.get('content-type') ?? '').startsWith(PROBLEM_CONTENT_TYPE)) return response;
	// Anything the framework answered itself (unknown path, wrong method, error()) becomes a problem too.
	let detail: string | undefined;
	try {
		const text = await response.text();
		const parsed = JSON.parse(text) as { message?: string };
		detail = parsed.message;
	} catch {
		/* not JSON: keep the status title */
	}
	const headers: Record<string, string> = {};
	const allow = response.headers.get('allow');
	if (allow) headers.allow = allow;
	if (response.status === 404 && (!detail || detail === 'Not Found')) detail = `No API resource at ${event.url.pathname}.`;
	return problemResponse(
		{ status: response.status, detail: detail && detail !== STATUS_TITLES[response.status] ? detail : undefined, headers },
		event.locals.requestId
	);
};

function toProblem(e: unknown, requestId: string): Response {
	if (e instanceof ApiError) return problemResponse(e.init, requestId);
	return problemResponse({ status: 500, detail: 'Something went wrong on our side; the request id identifies it in our logs.' }, requestId);
}

const auth: Handle = async ({ event, resolve }) => {
	const path = event.url.pathname;
	let result;
	try {
		result = await authenticate(event);
	} catch (e) {
		event.locals.log.error({ err: e }, 'authentication failed');
		if (isApi(path))
			return problemResponse(
				{ status: 503, detail: 'The database is not reachable; try again shortly.', headers: { 'retry-after': '5' } },
				event.locals.requestId
			);
		throw e;
	}
	event.locals.principal = result.principal;

	const routeId = event.route.id;
	if (routeId === null) return resolve(event); // no such route: the framework answers 404
	const rule = ruleFor(routeId, event.request.method);
	if (!rule) {
		if (isApi(path))
			return problemResponse({ status: 405, detail: `${event.request.method} is not allowed on ${path}.` }, event.locals.requestId);
		return new Response('Method not allowed', { status: 405 });
	}
	if (result.badCredentials && isApi(path)) {
		return problemResponse(
			{
				status: 401,
				type: 'invalid-token',
				detail: 'The bearer token is unknown, revoked or expired.',
				headers: { 'www-authenticate': 'Bearer realm="runnel", error="invalid_token"' }
			},
			event.locals.requestId
		);
	}
	const decision = decide(rule, result.principal);
	if (decision.ok) return resolve(event);

	if (isApi(path)) {
		if (decision.reason === 'unauthenticated') {
			return problemResponse(
				{
					status: 401,
					detail: 'Send a bearer token (Authorization: Bearer rnl_…) or sign in.',
					headers: { 'www-authenticate': 'Bearer realm="runnel"' }
				},
				event.locals.requestId
			);
		}
		if (decision.reason === 'insufficient_scope') {
			return problemResponse(
				{
					status: 403,
					type: 'insufficient-scope',
					detail: `This needs the \`${decision.scope}\` scope, which your credentials do not carry.`,
					headers: { 'www-authenticate': `Bearer realm="runnel", error="insufficient_scope", scope="${decision.scope}"` }
				},
				event.locals.requestId
			);
		}
		return problemResponse({ status: 403, detail: 'Your role may not use this resource.' }, event.locals.requestId);
	}
	if (decision.reason === 'unauthenticated') redirect(303, `/sign-in?next=${encodeURIComponent(path + event.url.search)}`);
	// A signed-in person whose role may not use this page: the root layout renders a friendly 403.
	if (event.request.method !== 'GET' && event.request.method !== 'HEAD') return new Response('Forbidden', { status: 403 });
	event.locals.forbidden = true;
	return resolve(event);
};

// CSP, nosniff, referrer and framing headers (src/lib/server/http/security.ts; pages get their CSP
// from kit.csp in svelte.config.js, per-route overrides such as the API docs page live in ROUTE_POLICIES).
const securityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	applySecurityHeaders(response, event.route.id, config.origin.startsWith('https:'));
	return response;
};

// SvelteKit's CSRF origin check, in our hands (see src/lib/server/http/security.ts for why).
const csrf: Handle = async ({ event, resolve }) => {
	const refusal = csrfRefusal(event.request, event.url, event.route.id);
	if (!refusal) return resolve(event);
	if (isApi(event.url.pathname) && !OWN_ERROR_FORMAT.has(event.route.id ?? '')) {
		return problemResponse(
			{ status: 403, detail: `Cross-site ${event.request.method} form submissions are forbidden; send the body as JSON or a file type.` },
			event.locals.requestId
		);
	}
	return refusal;
};

export const handle: Handle = sequence(requestId, securityHeaders, csrf, problems, auth);

export const handleError: HandleServerError = ({ error, event, status, message }) => {
	if (error instanceof ApiError) {
		event.locals.apiError = error;
		return { message: error.init.detail ?? message, status: error.init.status };
	}
	if (status !== 404) event.locals.log?.error({ err: error }, 'unhandled error');
	return { message: status === 404 ? 'Not found' : 'Something went wrong on our side.', requestId: event.locals.requestId };
};
