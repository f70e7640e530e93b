// POST a visit's outcome: the district (own records) or the manager. A manager's `not_found` is confirmed
// at once and withdraws the record's credit from the visit day.
import { json } from '@sveltejs/kit';
import { OutcomeInput } from '$lib/schema/verification';
import { readJson } from '$lib/server/http/json-body';
import { recordOutcome } from '$lib/server/verification/visits';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async ({ params, request, locals }) =>
	json(await recordOutcome(locals.principal!, params.id, await readJson(request, OutcomeInput)));
