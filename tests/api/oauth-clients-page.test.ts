// The admin page that registers and revokes OAuth clients: the secret is shown once and stored only
// as a hash; field errors for bad input; admins only.
import { createHash } from 'node:crypto';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, getDb } from '$lib/server/db';
import { appHandler, bearer, DEMO_TOKENS } from '../helpers/app';

type Handler = Awaited<ReturnType<typeof appHandler>>;
let app: Handler;
let districtId: number;

beforeAll(async () => {
	app = await appHandler();
	districtId = (await getDb().selectFrom('districts').select('id').where('code', '=', 'KTP').executeTakeFirstOrThrow()).id;
});
afterAll(() => closeDb());

const post = (action: string, body: string) =>
	request(app)
		.post(`/admin/oauth-clients?/${action}`)
		.set(bearer(DEMO_TOKENS.admin))
		.set('Origin', process.env.ORIGIN!)
		.set('Accept', 'text/html')
		.type('form')
		.send(body);

describe('/admin/oauth-clients', () => {
	it('registers a client: id and secret shown once, only the hash stored, listed afterwards', async () => {
		const name = `Kettle Prairie sync ${Date.now()}`;
		const res = await post(
			'create',
			`name=${encodeURIComponent(name)}&district_id=${districtId}&scopes=records%3Aread&scopes=rollups%3Aread`
		);
		expect(res.status).toBe(200);
		const clientId = /value="(rnlc_[\w-]+)"/.exec(res.text)?.[1];
		const secret = /value="(rnlcs_[\w-]+)"/.exec(res.text)?.[1];
		expect(clientId).toBeTruthy();
		expect(secret).toBeTruthy();
		expect(res.text).toContain('cannot show it again');

		const row = await getDb().selectFrom('oauth_clients').selectAll().where('client_id', '=', clientId!).executeTakeFirstOrThrow();
		expect(row).toMatchObject({ name, district_id: districtId, scopes: ['records:read', 'rollups:read'] });
		expect(row.secret_hash).toBe(createHash('sha256').update(secret!).digest('hex'));
		expect(JSON.stringify(row)).not.toContain(secret!);
		// The admin token's user is recorded as the creator.
		const admin = await getDb().selectFrom('users').select('id').where('email', '=', 'admin@runnel.test').executeTakeFirstOrThrow();
		expect(row.created_by).toBe(admin.id);

		const list = await request(app).get('/admin/oauth-clients').set(bearer(DEMO_TOKENS.admin));
		expect(list.status).toBe(200);
		expect(list.text).toContain(name);
		expect(list.text).toContain(clientId!);
		expect(list.text).not.toContain(secret!); // never shown again

		// The new client works at the token endpoint.
		const tok = await request(app).post('/api/v1/oauth/token').auth(clientId!, secret!).type('form').send('grant_type=client_credentials');
		expect(tok.status).toBe(200);
		expect(tok.body.scope).toBe('records:read rollups:read');
	});

	it('shows field errors for a missing name, an unknown district and a scope a district may not hold', async () => {
		const res = await post('create', 'name=+&district_id=987654&scopes=admin');
		expect(res.status).toBe(400);
		expect(res.text).toContain('Give the client a name');
		expect(res.text).toContain('Not a scope a district may hold.');
		const noScopes = await post('create', `name=x&district_id=987654`);
		expect(noScopes.text).toContain('Choose at least one scope.');
		const unknownDistrict = await post('create', `name=x&district_id=987654&scopes=records%3Aread`);
		expect(unknownDistrict.status).toBe(400);
		expect(unknownDistrict.text).toContain('Choose a district from the list.');
	});

	it('revokes a client once', async () => {
		const created = await post('create', `name=Temporary&district_id=${districtId}&scopes=records%3Aread`);
		const clientId = /value="(rnlc_[\w-]+)"/.exec(created.text)![1];
		const { id } = await getDb().selectFrom('oauth_clients').select('id').where('client_id', '=', clientId).executeTakeFirstOrThrow();
		expect((await post('revoke', `id=${id}`)).status).toBe(200);
		const row = await getDb().selectFrom('oauth_clients').select('revoked_at').where('id', '=', id).executeTakeFirstOrThrow();
		expect(row.revoked_at).toBeInstanceOf(Date);
		const again = await post('revoke', `id=${id}`);
		expect(again.status).toBe(409);
		expect(again.text).toContain('already revoked');
	});

	it('is for admins only', async () => {
		for (const who of ['manager', 'district', 'researcher'] as const) {
			expect((await request(app).get('/admin/oauth-clients').set(bearer(DEMO_TOKENS[who]))).status).toBe(403);
			const res = await request(app)
				.post('/admin/oauth-clients?/create')
				.set(bearer(DEMO_TOKENS[who]))
				.set('Origin', process.env.ORIGIN!)
				.type('form')
				.send(`name=x&district_id=${districtId}&scopes=records%3Aread`);
			expect(res.status).toBe(403);
		}
		expect((await request(app).get('/admin/oauth-clients')).status).toBe(303);
	});
});
