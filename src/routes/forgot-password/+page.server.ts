import { fail } from '@sveltejs/kit';
import { forgotPasswordSchema } from '$lib/schema/accounts';
import { requestPasswordReset } from '$lib/server/accounts/users';
import { getDb } from '$lib/server/db';
import { clientOf } from '$lib/server/http/client';
import { fieldErrors } from '$lib/server/http/forms';
import type { Actions } from './$types';

export const actions = {
	default: async (event) => {
		const form = await event.request.formData();
		const email = String(form.get('email') ?? '');
		const parsed = forgotPasswordSchema.safeParse({ email });
		if (!parsed.success) return fail(400, { email, errors: fieldErrors(parsed.error), sent: false });
		// The same answer whether or not the address has an account.
		await requestPasswordReset(getDb(), parsed.data.email, clientOf(event).ip);
		return { email: parsed.data.email, errors: {} as Record<string, string>, sent: true };
	}
} satisfies Actions;
