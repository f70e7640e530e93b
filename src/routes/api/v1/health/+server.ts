import { json } from '@sveltejs/kit';
import { checkHealth } from '$lib/server/health';
import { problemResponse } from '$lib/server/http/problem';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals }) => {
	const health = await checkHealth();
	if (health.status === 'ok') return json(health, { headers: { 'cache-control': 'no-store' } });
	const detail =
		health.database === 'unreachable' ? 'The database is not reachable.' : `Migrations pending: ${health.migrations.pending.join(', ')}.`;
	return problemResponse(
		{ status: 503, type: 'unhealthy', detail, headers: { 'retry-after': '5', 'cache-control': 'no-store' }, extra: { health } },
		locals.requestId
	);
};
