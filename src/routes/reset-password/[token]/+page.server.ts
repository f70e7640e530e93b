import { fail, redirect } from '@sveltejs/kit';
import { newPasswordSchema } from '$lib/schema/accounts';
import { findLink } from '$lib/server/accounts/links';
import { resetPassword } from '$lib/server/accounts/users';
import { getDb } from '$lib/server/db';
import { clearSessionCookie } from '$lib/server/auth/sessions';
import { clientOf } from '$lib/server/http/client';
import { fieldErrors } from '$lib/server/http/forms';
import type { Actions, PageServerLoad } from './$types';

export const load = (async ({ params }) => {
	const holder = await findLink(getDb(), 'password-reset', params.token);
	return { valid: holder !== null, email: holder?.email ?? null };
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		const form = await event.request.formData();
		const parsed = newPasswordSchema.safeParse({ password: form.get('password') ?? '', confirm: form.get('confirm') ?? '' });
		if (!parsed.success) return fail(400, { errors: fieldErrors(parsed.error), used: false });
		const done = await resetPassword(getDb(), event.params.token, parsed.data.password, clientOf(event).ip);
		if (!done) return fail(410, { errors: {} as Record<string, string>, used: true });
		clearSessionCookie(event.cookies);
		redirect(303, '/sign-in?notice=password-reset');
	}
} satisfies Actions;
