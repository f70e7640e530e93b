import { fail, redirect } from '@sveltejs/kit';
import { districtCreateSchema } from '$lib/schema/accounts';
import { createDistrict, listDistricts } from '$lib/server/accounts/districts';
import { getDb } from '$lib/server/db';
import { clientOf } from '$lib/server/http/client';
import { fieldErrors, formValues } from '$lib/server/http/forms';
import type { Actions, PageServerLoad } from './$types';

export const load = (async () => ({ districts: await listDistricts(getDb()) })) satisfies PageServerLoad;

export const actions = {
	create: async (event) => {
		const values = formValues(await event.request.formData());
		const parsed = districtCreateSchema.safeParse(values);
		if (!parsed.success) return fail(400, { errors: fieldErrors(parsed.error), values });
		const r = await createDistrict(getDb(), parsed.data, event.locals.principal!, clientOf(event).ip);
		if (!r.ok) return fail(400, { errors: { [r.field]: r.message }, values });
		redirect(303, `/admin/districts/${r.id}?created=1`);
	}
} satisfies Actions;
