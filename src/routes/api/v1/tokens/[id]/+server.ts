// DELETE /api/v1/tokens/{id}: revoke one of the caller's own tokens (204); someone else's is 404.
import { revokeApiToken } from '$lib/server/accounts/api-tokens';
import { getDb } from '$lib/server/db';
import { clientOf } from '$lib/server/http/client';
import { ApiError } from '$lib/server/http/problem';
import type { RequestHandler } from './$types';

export const DELETE: RequestHandler = async (event) => {
	const p = event.locals.principal!;
	if (p.userId === null) throw new ApiError({ status: 403, detail: 'Only people have personal API tokens; OAuth clients do not.' });
	const id = /^\d{1,9}$/.test(event.params.id) ? Number(event.params.id) : NaN;
	if (!Number.isInteger(id) || !(await revokeApiToken(getDb(), id, { ownerId: p.userId, actor: p, ip: clientOf(event).ip }))) {
		throw new ApiError({ status: 404, detail: 'You have no live token with this id.' });
	}
	return new Response(null, { status: 204 });
};
