// GET one practice record with its current warnings and every version (and the batch each came from).
import { json } from '@sveltejs/kit';
import { getDb } from '$lib/server/db';
import { recordDetail } from '$lib/server/records/queries';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ params, locals }) => json(await recordDetail(getDb(), locals.principal!, params.id));
