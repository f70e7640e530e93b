// POST /api/v1/dataset/releases/{version}/withdraw — { reason }; the release stays listed as withdrawn.
import { json } from '@sveltejs/kit';
import { getDb } from '$lib/server/db';
import { readJsonBody, requireReleaseManager } from '$lib/server/dataset/access';
import { getRelease, withdrawRelease } from '$lib/server/dataset/release';
import { WithdrawRelease } from '$lib/schema/dataset';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async ({ params, request, locals }) => {
	requireReleaseManager(locals.principal);
	const body = await readJsonBody(request, WithdrawRelease);
	await withdrawRelease(getDb(), params.version, body.reason);
	const r = await getRelease(getDb(), params.version);
	return json({ version: r.version, status: r.status, withdrawn_reason: r.withdrawn_reason, withdrawn_at: r.withdrawn_at });
};
