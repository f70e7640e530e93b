import { error } from '@sveltejs/kit';
import { batchForPrincipal } from '$lib/server/batches/queries';
import { ApiError } from '$lib/server/http/problem';
import type { PageServerLoad } from './$types';

export const load = (async ({ locals, params }) => {
	try {
		return { batch: await batchForPrincipal(locals.principal!, params.id) };
	} catch (e) {
		if (e instanceof ApiError && e.init.status === 404) error(404, 'No such batch');
		throw e;
	}
}) satisfies PageServerLoad;
