// GET one batch: status, progress, counts, file facts (poll this after POST /api/v1/batches).
import { json } from '@sveltejs/kit';
import { batchForPrincipal } from '$lib/server/batches/queries';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ params, locals }) => {
	const batch = await batchForPrincipal(locals.principal!, params.id);
	// While the batch is being checked, tell pollers when to look again.
	const headers: Record<string, string> = { 'cache-control': 'no-store' };
	if (batch.status === 'received' || batch.status === 'checking') headers['retry-after'] = '1';
	return json(batch, { headers });
};
