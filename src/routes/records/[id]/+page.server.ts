import { error } from '@sveltejs/kit';
import { getDb } from '$lib/server/db';
import { ApiError } from '$lib/server/http/problem';
import { recordDetail } from '$lib/server/records/queries';
import { reviewHistory, reviewStatusOf } from '$lib/server/reviews/queue';
import type { PageServerLoad } from './$types';

export const load = (async ({ locals, params }) => {
	try {
		// The record carries its upkeep events and (bioreactors) upkeep status, as the API answers them.
		const record = await recordDetail(getDb(), locals.principal!, params.id);
		const county = await getDb().selectFrom('counties').select('name').where('fips', '=', record.county_fips).executeTakeFirst();
		// Reviews: the record's place in the review queue and every decision on it.
		const [reviews, reviewStatus] = await Promise.all([reviewHistory(getDb(), record.id), reviewStatusOf(getDb(), record.id)]);
		return { record, countyName: county?.name ?? null, reviews, reviewStatus };
	} catch (e) {
		if (e instanceof ApiError && e.init.status === 404) error(404, 'No such record');
		throw e;
	}
}) satisfies PageServerLoad;
