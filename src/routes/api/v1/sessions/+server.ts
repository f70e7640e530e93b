// POST /api/v1/sessions: sign in with e-mail and password (JSON). Sets the same httpOnly session cookie
// as the sign-in page. Scripts should use personal API tokens instead.
import { json } from '@sveltejs/kit';
import { signInSchema } from '$lib/schema/accounts';
import { signInWithPassword } from '$lib/server/auth/sign-in';
import { setSessionCookie } from '$lib/server/auth/sessions';
import { clientOf } from '$lib/server/http/client';
import { readJson } from '$lib/server/http/json-body';
import { ApiError } from '$lib/server/http/problem';
import { getDb } from '$lib/server/db';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	const body = await readJson(event.request, signInSchema);
	const outcome = await signInWithPassword(getDb(), { ...body, ...clientOf(event) });
	if (outcome.ok) {
		setSessionCookie(event.cookies, outcome.session.token, outcome.session.expiresAt);
		return json({ user_id: outcome.userId, expires_at: outcome.session.expiresAt.toISOString() }, { status: 201 });
	}
	if (outcome.reason === 'throttled')
		throw new ApiError({
			status: 429,
			type: 'sign-in-throttled',
			detail: `Too many failed sign-ins; wait ${outcome.retryAfter} seconds before trying again.`,
			headers: { 'retry-after': String(outcome.retryAfter) }
		});
	if (outcome.reason === 'deactivated')
		throw new ApiError({ status: 403, type: 'account-deactivated', detail: 'This account is deactivated.' });
	throw new ApiError({
		status: 401,
		type: 'invalid-credentials',
		detail: 'That e-mail address and password do not match an account.',
		headers: { 'www-authenticate': 'Bearer realm="runnel"' }
	});
};
