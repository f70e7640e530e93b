import { fail, redirect } from '@sveltejs/kit';
import { describeWait } from '$lib/domain/sign-in-throttle';
import { safeNextPath } from '$lib/domain/safe-redirect';
import { signInSchema } from '$lib/schema/accounts';
import { getDb } from '$lib/server/db';
import { signInWithPassword } from '$lib/server/auth/sign-in';
import { setSessionCookie } from '$lib/server/auth/sessions';
import { clientOf } from '$lib/server/http/client';
import { fieldErrors } from '$lib/server/http/forms';
import type { Actions, PageServerLoad } from './$types';

export const load = (async ({ locals, url }) => {
	const next = safeNextPath(url.searchParams.get('next'));
	if (locals.principal) redirect(303, next);
	return { next, notice: url.searchParams.get('notice') };
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		const form = await event.request.formData();
		const email = String(form.get('email') ?? '');
		const next = safeNextPath(String(form.get('next') ?? '') || event.url.searchParams.get('next'));
		const parsed = signInSchema.safeParse({ email, password: form.get('password') ?? '' });
		if (!parsed.success) return fail(400, { email, errors: fieldErrors(parsed.error), message: null });

		const outcome = await signInWithPassword(getDb(), { ...parsed.data, ...clientOf(event) });
		if (outcome.ok) {
			setSessionCookie(event.cookies, outcome.session.token, outcome.session.expiresAt);
			redirect(303, next);
		}
		if (outcome.reason === 'throttled') {
			event.setHeaders({ 'retry-after': String(outcome.retryAfter) });
			return fail(429, {
				email,
				errors: {},
				retryAfter: outcome.retryAfter,
				message: `Too many failed sign-ins. Wait ${describeWait(outcome.retryAfter)} before trying again, or reset your password.`
			});
		}
		if (outcome.reason === 'deactivated')
			return fail(403, { email, errors: {}, message: 'This account is deactivated. Ask your state administrator to reactivate it.' });
		return fail(400, {
			email,
			errors: {},
			message: 'That e-mail address and password do not match an account. Check both and try again.'
		});
	}
} satisfies Actions;
