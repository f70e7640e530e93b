import { fail } from '@sveltejs/kit';
import { inviteSchema } from '$lib/schema/accounts';
import { listDistricts } from '$lib/server/accounts/districts';
import { inviteUser, listUsers } from '$lib/server/accounts/users';
import { getDb } from '$lib/server/db';
import { clientOf } from '$lib/server/http/client';
import { fieldErrors, formValues } from '$lib/server/http/forms';
import type { Actions, PageServerLoad } from './$types';

export const load = (async () => {
	const db = getDb();
	const [users, districts] = await Promise.all([listUsers(db), listDistricts(db)]);
	return { users, districts: districts.map((d) => ({ id: d.id, name: d.name, code: d.code })) };
}) satisfies PageServerLoad;

export const actions = {
	invite: async (event) => {
		const values = formValues(await event.request.formData());
		const parsed = inviteSchema.safeParse(values);
		if (!parsed.success) return fail(400, { errors: fieldErrors(parsed.error), values });
		const r = await inviteUser(getDb(), parsed.data, event.locals.principal!, clientOf(event).ip);
		if (!r.ok) return fail(400, { errors: { [r.field]: r.message }, values });
		return { invited: { email: parsed.data.email, id: r.userId } };
	}
} satisfies Actions;
