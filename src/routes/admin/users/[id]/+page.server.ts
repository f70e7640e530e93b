import { error, fail } from '@sveltejs/kit';
import { userUpdateSchema } from '$lib/schema/accounts';
import { listApiTokens, revokeApiToken } from '$lib/server/accounts/api-tokens';
import { listAudit } from '$lib/server/accounts/audit';
import { listDistricts } from '$lib/server/accounts/districts';
import { getUser, resendInvitation, setActive, updateUser } from '$lib/server/accounts/users';
import { getDb } from '$lib/server/db';
import { clientOf } from '$lib/server/http/client';
import { fieldErrors, formValues } from '$lib/server/http/forms';
import type { Actions, PageServerLoad } from './$types';

function userId(param: string): number {
	const id = Number(param);
	if (!/^\d{1,9}$/.test(param) || !Number.isSafeInteger(id)) error(404, 'Not found');
	return id;
}

export const load = (async ({ params, locals }) => {
	const id = userId(params.id);
	const db = getDb();
	const user = await getUser(db, id);
	if (!user) error(404, 'Not found');
	const [districts, tokens, audit] = await Promise.all([
		listDistricts(db),
		listApiTokens(db, { userId: id, limit: 100 }),
		listAudit(db, { userId: id, limit: 10 })
	]);
	return {
		user,
		isSelf: locals.principal?.userId === id,
		districts: districts.map((d) => ({ id: d.id, name: d.name, code: d.code })),
		tokens: tokens.rows,
		audit: audit.rows
	};
}) satisfies PageServerLoad;

export const actions = {
	update: async (event) => {
		const id = userId(event.params.id);
		const values = formValues(await event.request.formData());
		const parsed = userUpdateSchema.safeParse(values);
		if (!parsed.success) return fail(400, { action: 'update', errors: fieldErrors(parsed.error), values });
		const r = await updateUser(getDb(), id, parsed.data, event.locals.principal!, clientOf(event).ip);
		if (!r.ok) return fail(400, { action: 'update', errors: { [r.field]: r.message }, values });
		return { action: 'update', message: 'Saved.' };
	},
	deactivate: async (event) => {
		const r = await setActive(getDb(), userId(event.params.id), false, event.locals.principal!, clientOf(event).ip);
		if (!r.ok) return fail(400, { action: 'status', message: r.message });
		return { action: 'status', message: 'Deactivated: their sessions have ended and their API tokens no longer work.' };
	},
	reactivate: async (event) => {
		const r = await setActive(getDb(), userId(event.params.id), true, event.locals.principal!, clientOf(event).ip);
		if (!r.ok) return fail(400, { action: 'status', message: r.message });
		return { action: 'status', message: 'Reactivated: they can sign in again, and their unrevoked, unexpired tokens work again.' };
	},
	resendInvitation: async (event) => {
		const ok = await resendInvitation(getDb(), userId(event.params.id), event.locals.principal!, clientOf(event).ip);
		if (!ok) return fail(400, { action: 'status', message: 'Only someone who has not accepted an invitation yet can get a new one.' });
		return { action: 'status', message: 'A new invitation is on its way; the earlier link no longer works.' };
	},
	revokeToken: async (event) => {
		const id = userId(event.params.id);
		const tokenId = Number((await event.request.formData()).get('token'));
		if (!Number.isInteger(tokenId)) return fail(400, { action: 'tokens', message: 'No such token.' });
		const ok = await revokeApiToken(getDb(), tokenId, { ownerId: id, actor: event.locals.principal!, ip: clientOf(event).ip });
		if (!ok) return fail(404, { action: 'tokens', message: 'That token was already revoked.' });
		return { action: 'tokens', message: 'Token revoked.' };
	}
} satisfies Actions;
