// GET /api/v1/dataset/releases — every release (withdrawn ones stay listed with their reason).
// POST — a manager or admin publishes a new frozen release.
import { json } from '@sveltejs/kit';
import { getDb } from '$lib/server/db';
import { listReleases, publishRelease } from '$lib/server/dataset/release';
import { readJsonBody, requireReleaseManager } from '$lib/server/dataset/access';
import { CreateRelease } from '$lib/schema/dataset';
import { actorOf } from '$lib/server/auth/principal';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async () => {
	const rows = await listReleases(getDb());
	return json(
		{ data: rows.map((r) => ({ ...r, links: { self: `/api/v1/dataset/releases/${r.version}` } })) },
		{ headers: { 'cache-control': 'no-store' } }
	);
};

export const POST: RequestHandler = async ({ request, locals, url }) => {
	const principal = requireReleaseManager(locals.principal);
	const body = await readJsonBody(request, CreateRelease);
	const manifest = await publishRelease(getDb(), {
		version: body.version,
		notes: body.notes,
		actor: actorOf(principal),
		origin: url.origin
	});
	return json(manifest, { status: 201, headers: { location: `/api/v1/dataset/releases/${body.version}` } });
};
