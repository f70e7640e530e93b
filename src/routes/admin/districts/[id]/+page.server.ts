import { error, fail } from '@sveltejs/kit';
import { districtUpdateSchema } from '$lib/schema/accounts';
import { getDistrict, hubCounties, updateDistrict } from '$lib/server/accounts/districts';
import { getDb } from '$lib/server/db';
import { clientOf } from '$lib/server/http/client';
import { fieldErrors } from '$lib/server/http/forms';
import type { Actions, PageServerLoad } from './$types';

function districtId(param: string): number {
	if (!/^\d{1,9}$/.test(param)) error(404, 'Not found');
	return Number(param);
}

export const load = (async ({ params, url }) => {
	const db = getDb();
	const district = await getDistrict(db, districtId(params.id));
	if (!district) error(404, 'Not found');
	return { district, counties: await hubCounties(db), created: url.searchParams.has('created') };
}) satisfies PageServerLoad;

/** Contact rows arrive as parallel lists (`contact_name`, `contact_email`, …); blank rows are dropped. */
function contactsFrom(form: FormData) {
	const names = form.getAll('contact_name').map(String);
	const titles = form.getAll('contact_title').map(String);
	const emails = form.getAll('contact_email').map(String);
	const phones = form.getAll('contact_phone').map(String);
	return names
		.map((name, i) => ({ name, title: titles[i] ?? '', email: emails[i] ?? '', phone: phones[i] ?? '' }))
		.filter((c) => [c.name, c.title, c.email, c.phone].some((v) => v.trim() !== ''))
		.map((c) => ({
			name: c.name,
			email: c.email,
			...(c.title.trim() ? { title: c.title } : {}),
			...(c.phone.trim() ? { phone: c.phone } : {})
		}));
}

export const actions = {
	update: async (event) => {
		const id = districtId(event.params.id);
		const form = await event.request.formData();
		const values = {
			name: String(form.get('name') ?? ''),
			region: String(form.get('region') ?? ''),
			counties: form.getAll('counties').map(String),
			contacts: contactsFrom(form),
			notify_on_rejected: form.get('notify_on_rejected') === 'on'
		};
		const parsed = districtUpdateSchema.safeParse(values);
		if (!parsed.success) return fail(400, { errors: fieldErrors(parsed.error), values });
		const r = await updateDistrict(getDb(), id, parsed.data, event.locals.principal!, clientOf(event).ip);
		if (!r.ok) return fail(400, { errors: { [r.field]: r.message }, values });
		return { saved: true };
	}
} satisfies Actions;
