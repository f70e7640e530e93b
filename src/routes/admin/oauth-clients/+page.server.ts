import { fail } from '@sveltejs/kit';
import { ROLE_SCOPES } from '$lib/domain/scopes';
import { OAuthClientCreate } from '$lib/schema/oauth';
import { tokenAudience, tokenIssuer } from '$lib/server/auth/access-tokens';
import { listClients, registerClient, revokeClient } from '$lib/server/auth/oauth-clients';
import { config } from '$lib/server/config';
import { getDb } from '$lib/server/db';
import { displayTime } from '$lib/server/mail/format';
import type { Actions, PageServerLoad } from './$types';

export const load = (async () => {
	const db = getDb();
	const [clients, districts] = await Promise.all([
		listClients(db),
		db.selectFrom('districts').select(['id', 'name', 'code']).orderBy('name').execute()
	]);
	return {
		districts,
		scopes: ROLE_SCOPES.district,
		tokenUrl: `${config.origin.replace(/\/$/, '')}/api/v1/oauth/token`,
		jwksUrl: `${config.origin.replace(/\/$/, '')}/.well-known/jwks.json`,
		issuer: tokenIssuer(),
		audience: tokenAudience(),
		ttlMinutes: Math.round(config.accessTokenTtlSeconds / 60),
		clients: clients.map((c) => ({
			id: c.id,
			clientId: c.clientId,
			name: c.name,
			districtName: c.districtName,
			scopes: c.scopes,
			createdBy: c.createdBy,
			created: displayTime(c.createdAt)!,
			lastUsed: displayTime(c.lastUsedAt),
			revoked: displayTime(c.revokedAt)
		}))
	};
}) satisfies PageServerLoad;

export const actions = {
	create: async ({ request, locals }) => {
		const form = await request.formData();
		const values = {
			name: String(form.get('name') ?? ''),
			district_id: String(form.get('district_id') ?? ''),
			scopes: form.getAll('scopes').map(String)
		};
		const parsed = OAuthClientCreate.safeParse(values);
		if (!parsed.success) {
			const errors: Record<string, string> = {};
			for (const issue of parsed.error.issues) errors[String(issue.path[0])] ??= issue.message;
			return fail(400, { create: { values, errors } });
		}
		const db = getDb();
		const district = await db.selectFrom('districts').select('id').where('id', '=', parsed.data.district_id).executeTakeFirst();
		if (!district) return fail(400, { create: { values, errors: { district_id: 'Choose a district from the list.' } } });
		const { client, clientSecret } = await registerClient(db, {
			name: parsed.data.name,
			districtId: parsed.data.district_id,
			scopes: parsed.data.scopes,
			createdBy: locals.principal?.userId ?? null
		});
		return { created: { name: client.name, clientId: client.client_id, clientSecret, scopes: client.scopes } };
	},
	revoke: async ({ request }) => {
		const id = Number((await request.formData()).get('id'));
		if (!Number.isInteger(id) || id <= 0) return fail(400, { revokeError: 'Unknown client.' });
		const ok = await revokeClient(getDb(), id);
		if (!ok) return fail(409, { revokeError: 'That client is unknown or already revoked.' });
		return { revoked: id };
	}
} satisfies Actions;
