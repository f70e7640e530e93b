// GET /api/v1/districts: the districts of the hub with counties served and contacts. A district's
// credentials see only their own district.
import { json } from '@sveltejs/kit';
import { districtJson } from '$lib/server/accounts/api-json';
import { listDistricts } from '$lib/server/accounts/districts';
import { getDb } from '$lib/server/db';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals }) => {
	const p = locals.principal!;
	const districts = await listDistricts(getDb(), { onlyId: p.districtId });
	// One state's districts fit in one page; `next` keeps the shape of every other list.
	return json({ items: districts.map(districtJson), next: null });
};
