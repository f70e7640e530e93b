// GET /api/v1/districts/{code}: one district. The permission table marks `code` as a district
// parameter, so the hooks refuse another district's credentials before this runs.
import { json } from '@sveltejs/kit';
import { districtJson } from '$lib/server/accounts/api-json';
import { listDistricts } from '$lib/server/accounts/districts';
import { getDb } from '$lib/server/db';
import { ApiError } from '$lib/server/http/problem';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ params }) => {
	const [d] = await listDistricts(getDb(), { code: params.code.toUpperCase() });
	if (!d) throw new ApiError({ status: 404, detail: `There is no district with code ${params.code}.` });
	return json(districtJson(d));
};
