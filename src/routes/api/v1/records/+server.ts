// GET practice records the caller may see, with filters (district, county, practice, fiscal year,
// status, local_id) and cursor pages. A district sees only its own records.
import { PRACTICE_CODES } from '$lib/domain/practice-catalog';
import { pageLimit, pageResponse } from '$lib/server/http/cursor';
import { ApiError } from '$lib/server/http/problem';
import { enumParam, patternParam } from '$lib/server/http/query';
import { listRecords } from '$lib/server/records/queries';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ url, locals }) => {
	const fy = patternParam(url, 'fiscal_year', /^\d{4}$/, 'a four-digit fiscal year');
	const practice = url.searchParams.get('practice') || null;
	if (practice !== null && !PRACTICE_CODES.includes(practice))
		throw new ApiError({
			status: 400,
			type: 'invalid-parameter',
			detail: `practice must be a code of the practice list (${PRACTICE_CODES.join(', ')}).`,
			errors: [{ pointer: '#/query/practice', detail: 'unknown practice code' }]
		});
	const page = await listRecords(
		locals.principal!,
		url,
		{
			district: patternParam(url, 'district', /^[A-Za-z0-9_-]{1,32}$/, 'a district code'),
			county: patternParam(url, 'county', /^\d{5}$/, 'a 5-digit county FIPS code'),
			practice,
			fiscalYear: fy === null ? null : Number(fy),
			status: enumParam(url, 'status', ['installed', 'withdrawn'] as const),
			localId: patternParam(url, 'local_id', /^[A-Za-z0-9._-]{1,64}$/, 'a local id')
		},
		pageLimit(url, 50, 500)
	);
	return pageResponse(page);
};
