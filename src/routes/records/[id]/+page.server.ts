import { error } from '@sveltejs/kit';
import { getDb } from '$lib/server/db';
import { ApiError } from '$lib/server/http/problem';
import { recordDetail } from '$lib/server/records/queries';
import type { PageServerLoad } from './$types';

export const load = (async ({ locals, params }) => {
	try {
		const record = await recordDetail(getDb(), locals.principal!, params.id);
		const county = await getDb().selectFrom('counties').select('name').where('fips', '=', record.county_fips).executeTakeFirst();
		return { record, countyName: county?.name ?? null };
	} catch (e) {
		if (e instanceof ApiError && e.init.status === 404) error(404, 'No such record');
		throw e;
	}
}) satisfies PageServerLoad;
