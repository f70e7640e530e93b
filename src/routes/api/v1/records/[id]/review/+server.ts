// POST a manager's decision on a flagged record: `verified` (with a note) or `returned` (with a comment
// mailed to the district). Manager only (permission table).
import { json } from '@sveltejs/kit';
import { ReviewDecisionInput } from '$lib/schema/reviews';
import { readJson } from '$lib/server/http/json-body';
import { decideReview } from '$lib/server/reviews/queue';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async ({ params, request, locals }) => {
	const input = await readJson(request, ReviewDecisionInput);
	return json(await decideReview(locals.principal!, params.id, input), { status: 201 });
};
