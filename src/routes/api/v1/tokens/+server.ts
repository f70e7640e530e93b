// GET /api/v1/tokens: the caller's own personal API tokens (never the secrets), newest first.
// POST /api/v1/tokens: create one; the answer carries the token once, it is not stored.
import { json } from '@sveltejs/kit';
import { tokenCreateSchema } from '$lib/schema/accounts';
import { tokenJson } from '$lib/server/accounts/api-json';
import { createOwnToken, listApiTokens } from '$lib/server/accounts/api-tokens';
import { getDb } from '$lib/server/db';
import { clientOf } from '$lib/server/http/client';
import { z } from 'zod';
import { decodeCursor, encodeCursor, pageLimit } from '$lib/server/http/cursor';
import { readJson } from '$lib/server/http/json-body';
import { ApiError } from '$lib/server/http/problem';
import type { RequestHandler } from './$types';

function personId(p: App.Locals['principal']): number {
	if (!p || p.userId === null) throw new ApiError({ status: 403, detail: 'Only people have personal API tokens; OAuth clients do not.' });
	return p.userId;
}

export const GET: RequestHandler = async ({ locals, url }) => {
	const userId = personId(locals.principal);
	const limit = pageLimit(url, 50, 200);
	const cursor = decodeCursor(url.searchParams.get('cursor'), z.object({ before: z.number().int() }));
	const before = cursor?.before;
	const { rows, nextBefore } = await listApiTokens(getDb(), { userId, before, limit });
	const next =
		nextBefore === null
			? null
			: `/api/v1/tokens?${new URLSearchParams({ cursor: encodeCursor({ before: nextBefore }), limit: String(limit) })}`;
	return json({ items: rows.map(tokenJson), next });
};

export const POST: RequestHandler = async (event) => {
	personId(event.locals.principal);
	const body = await readJson(event.request, tokenCreateSchema);
	const r = await createOwnToken(
		getDb(),
		event.locals.principal!,
		{ name: body.name, scopes: body.scopes, expiresAt: body.expires_at },
		clientOf(event).ip
	);
	if (!r.ok) {
		const errors =
			r.field === 'scopes' && r.refused
				? r.refused.map((s) => ({ pointer: `/scopes/${body.scopes.indexOf(s)}`, detail: `\`${s}\` is not a scope you can grant.` }))
				: [{ pointer: `/${r.field === '_form' ? '' : r.field}`, detail: r.message }];
		throw new ApiError({
			status: r.field === '_form' ? 403 : 422,
			type: r.field === 'scopes' ? 'invalid-scope' : 'validation',
			detail: r.message,
			errors
		});
	}
	return json({ ...tokenJson(r.row), token: r.token }, { status: 201, headers: { location: `/api/v1/tokens/${r.id}` } });
};
