// GET one draw: its seed, parameters and per-district figures (a district sees its own row only).
import { json } from '@sveltejs/kit';
import { getDb } from '$lib/server/db';
import { ApiError } from '$lib/server/http/problem';
import { drawView } from '$lib/server/verification/draws';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ params, locals }) => {
	const draw = await drawView(getDb(), locals.principal!, params.id);
	if (!draw) throw new ApiError({ status: 404, type: 'draw-not-found', detail: 'There is no such draw.' });
	return json(draw);
};
