import { fail } from '@sveltejs/kit';
import { listApiTokens, revokeApiToken } from '$lib/server/accounts/api-tokens';
import { getDb } from '$lib/server/db';
import { clientOf } from '$lib/server/http/client';
import type { Actions, PageServerLoad } from './$types';

const PAGE = 100;

export const load = (async ({ url }) => {
	const all = url.searchParams.get('show') === 'all';
	const beforeParam = url.searchParams.get('before');
	const before = beforeParam && /^\d{1,9}$/.test(beforeParam) ? Number(beforeParam) : undefined;
	const { rows, nextBefore } = await listApiTokens(getDb(), { activeOnly: !all, before, limit: PAGE });
	return { tokens: rows, all, nextBefore, paged: before !== undefined };
}) satisfies PageServerLoad;

export const actions = {
	revoke: async (event) => {
		const id = Number((await event.request.formData()).get('id'));
		if (!Number.isInteger(id)) return fail(400, { message: 'No such token.' });
		const ok = await revokeApiToken(getDb(), id, { actor: event.locals.principal!, ip: clientOf(event).ip });
		if (!ok) return fail(404, { message: 'That token was already revoked.' });
		return { message: 'Token revoked. Requests with it now get 401.' };
	}
} satisfies Actions;
