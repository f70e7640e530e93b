// GET the review queue: records whose current version carries warnings, oldest first, with filters and
// cursor pages. Managers (and admins) see every district; district staff see their own records only.
import { PRACTICE_CODES } from '$lib/domain/practice-catalog';
import { REVIEW_STATUSES } from '$lib/schema/reviews';
import { pageLimit, pageResponse } from '$lib/server/http/cursor';
import { ApiError } from '$lib/server/http/problem';
import { enumParam, patternParam } from '$lib/server/http/query';
import { listReviews } from '$lib/server/reviews/queue';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ url, locals }) => {
	const practice = url.searchParams.get('practice') || null;
	if (practice !== null && !PRACTICE_CODES.includes(practice))
		throw new ApiError({
			status: 400,
			type: 'invalid-parameter',
			detail: `practice must be a code of the practice list (${PRACTICE_CODES.join(', ')}).`,
			errors: [{ pointer: '#/query/practice', detail: 'unknown practice code' }]
		});
	const days = (name: string) => {
		const v = patternParam(url, name, /^\d{1,5}$/, 'a whole number of days');
		return v === null ? null : Number(v);
	};
	const page = await listReviews(
		locals.principal!,
		url,
		{
			district: patternParam(url, 'district', /^[A-Za-z0-9_-]{1,32}$/, 'a district code'),
			practice,
			code: patternParam(url, 'code', /^[a-z0-9-]{1,64}$/, 'a finding code'),
			minAgeDays: days('min_age_days'),
			maxAgeDays: days('max_age_days'),
			status: enumParam(url, 'status', [...REVIEW_STATUSES, 'all'] as const) ?? 'open'
		},
		pageLimit(url, 50, 500)
	);
	return pageResponse(page);
};
