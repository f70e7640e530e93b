import { practiceEventJsonSchema } from '$lib/schema/event-json-schema';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = () =>
	new Response(JSON.stringify(practiceEventJsonSchema(), null, 2), {
		headers: { 'content-type': 'application/schema+json; charset=utf-8', 'cache-control': 'public, max-age=300' }
	});
