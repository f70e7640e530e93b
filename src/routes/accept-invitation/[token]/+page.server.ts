import { fail, redirect } from '@sveltejs/kit';
import { newPasswordSchema } from '$lib/schema/accounts';
import { findLink } from '$lib/server/accounts/links';
import { acceptInvitation } from '$lib/server/accounts/users';
import { getDb } from '$lib/server/db';
import { setSessionCookie } from '$lib/server/auth/sessions';
import { clientOf } from '$lib/server/http/client';
import { fieldErrors } from '$lib/server/http/forms';
import type { Actions, PageServerLoad } from './$types';

export const load = (async ({ params }) => {
	const h = await findLink(getDb(), 'invitation', params.token);
	return { invitation: h ? { email: h.email, name: h.name, role: h.role, districtName: h.districtName, expiresAt: h.expiresAt } : null };
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		const form = await event.request.formData();
		const parsed = newPasswordSchema.safeParse({ password: form.get('password') ?? '', confirm: form.get('confirm') ?? '' });
		if (!parsed.success) return fail(400, { errors: fieldErrors(parsed.error), used: false });
		const session = await acceptInvitation(getDb(), event.params.token, parsed.data.password, clientOf(event));
		if (!session) return fail(410, { errors: {} as Record<string, string>, used: true });
		setSessionCookie(event.cookies, session.token, session.expiresAt);
		redirect(303, '/');
	}
} satisfies Actions;
