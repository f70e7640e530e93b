import { json } from '@sveltejs/kit';
import { getDb } from '$lib/server/db';
import { ApiError } from '$lib/server/http/problem';
import { getMethod, methodJson } from '$lib/server/methods';
import type { RequestHandler } from './$types';

/** One method version with its whole cited table. */
export const GET: RequestHandler = async ({ params }) => {
	const m = await getMethod(getDb(), params.version);
	if (!m) throw new ApiError({ status: 404, detail: `No reduction method has version ${params.version}.` });
	return json(methodJson(m));
};
