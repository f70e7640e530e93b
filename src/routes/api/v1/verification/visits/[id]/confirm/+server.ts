// POST a manager's confirmation of a district's `not_found` visit: the record's credit ends on the visit day.
import { json } from '@sveltejs/kit';
import { confirmNotFound } from '$lib/server/verification/visits';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async ({ params, locals }) => json(await confirmNotFound(locals.principal!, params.id));
