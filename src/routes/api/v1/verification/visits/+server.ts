// GET field visits with filters (draw, district, state due|overdue|done, unconfirmed not-found) and cursor
// pages. A district sees its own visits only.
import { pageLimit, pageResponse } from '$lib/server/http/cursor';
import { enumParam, patternParam } from '$lib/server/http/query';
import { listVisits } from '$lib/server/verification/visits';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ url, locals }) => {
	const page = await listVisits(
		locals.principal!,
		url,
		{
			draw: patternParam(url, 'draw', /^[1-9][0-9]{0,9}$/, 'a draw id'),
			district: patternParam(url, 'district', /^[A-Za-z0-9_-]{1,32}$/, 'a district code'),
			state: enumParam(url, 'state', ['due', 'overdue', 'done'] as const),
			unconfirmed: enumParam(url, 'unconfirmed', ['true', 'false'] as const) === 'true'
		},
		pageLimit(url, 100, 500)
	);
	return pageResponse(page);
};
