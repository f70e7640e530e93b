// GET the field verification draws (newest fiscal year first); POST draws a fiscal year's sample (manager).
import { json } from '@sveltejs/kit';
import { DrawInput } from '$lib/schema/verification';
import { getDb } from '$lib/server/db';
import { readJson } from '$lib/server/http/json-body';
import { createDraw, listDraws } from '$lib/server/verification/draws';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals }) => json({ data: await listDraws(getDb(), locals.principal!), next: null });

export const POST: RequestHandler = async ({ request, locals }) => {
	const draw = await createDraw(locals.principal!, await readJson(request, DrawInput));
	return json(draw, { status: 201, headers: { location: `/api/v1/verification/draws/${draw.id}` } });
};
