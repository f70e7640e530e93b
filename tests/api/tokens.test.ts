// Personal API tokens: created on the account page or through /api/v1/tokens, shown once, stored as a
// SHA-256 hash, scopes a subset of the caller's, optional expiry, last-used time, revocation (own and
// by admins), and the audit rows for creation and revocation.
import { createHash } from 'node:crypto';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, getDb } from '$lib/server/db';
import { appHandler, bearer, DEMO_TOKENS } from '../helpers/app';
import { createToken, createUser, postForm, sessionCookie, userIdOf } from '../helpers/accounts';

const EMAIL = 'token.owner@runnel.test';
let ownerId: number;

beforeAll(async () => {
	ownerId = await createUser({
		email: EMAIL,
		role: 'district',
		districtCode: 'BLH',
		password: 'token owner password',
		name: 'Token Owner'
	});
});
afterAll(() => closeDb());

const api = async () => request(await appHandler());
const postJson = async (path: string, auth: Record<string, string>, body: unknown) =>
	(await api()).post(path).set(auth).set('content-type', 'application/json').send(JSON.stringify(body));

describe('POST /api/v1/tokens', () => {
	it('creates a token shown once, with a rnl_ prefix, stored only as its SHA-256 hash', async () => {
		const auth = { cookie: await sessionCookie(EMAIL) };
		const res = await postJson('/api/v1/tokens', auth, {
			name: 'nightly upload',
			scopes: ['records:write', 'records:read'],
			expires_at: '2099-01-01T00:00:00Z'
		});
		expect(res.status).toBe(201);
		expect(res.body.token).toMatch(/^rnl_[A-Za-z0-9_-]{32}$/);
		expect(res.headers.location).toBe(`/api/v1/tokens/${res.body.id}`);
		expect(res.body).toMatchObject({
			name: 'nightly upload',
			scopes: ['records:write', 'records:read'],
			status: 'active',
			expires_at: '2099-01-01T00:00:00.000Z',
			last_used_at: null
		});
		const row = await getDb().selectFrom('api_tokens').selectAll().where('id', '=', res.body.id).executeTakeFirstOrThrow();
		expect(row.token_hash).toBe(createHash('sha256').update(res.body.token).digest('hex'));
		expect(JSON.stringify(row)).not.toContain(res.body.token);

		// The token works, with exactly its scopes, and its last-used time is recorded.
		const me = await (await api()).get('/api/v1/me').set(bearer(res.body.token));
		expect(me.body).toMatchObject({ kind: 'token', role: 'district', scopes: ['records:write', 'records:read'] });
		const list = await (await api()).get('/api/v1/tokens').set(auth);
		const listed = list.body.items.find((t: { id: number }) => t.id === res.body.id);
		expect(listed.last_used_at).toEqual(expect.any(String));
		expect(listed.token).toBeUndefined();
		expect(JSON.stringify(list.body)).not.toContain(res.body.token);
	});

	it('refuses scopes beyond the role with 422 and a pointer to each one', async () => {
		const res = await postJson(
			'/api/v1/tokens',
			{ cookie: await sessionCookie(EMAIL) },
			{ name: 'too much', scopes: ['records:read', 'dataset:read', 'bogus'] }
		);
		expect(res.status).toBe(422);
		expect(res.body.type).toBe('urn:runnel:problem:invalid-scope');
		expect(res.body.errors).toEqual([
			{ pointer: '/scopes/1', detail: '`dataset:read` is not a scope you can grant.' },
			{ pointer: '/scopes/2', detail: '`bogus` is not a scope you can grant.' }
		]);
	});

	it('a token can mint only within its own scopes and lifetime', async () => {
		const narrow = await createToken(ownerId, ['records:read'], 'narrow');
		const wider = await postJson('/api/v1/tokens', bearer(narrow), { name: 'escalate', scopes: ['records:write'] });
		expect(wider.status).toBe(422);
		const same = await postJson('/api/v1/tokens', bearer(narrow), { name: 'copy', scopes: ['records:read'] });
		expect(same.status).toBe(201);

		const expiring = await createToken(ownerId, ['records:read'], 'expiring');
		await getDb()
			.updateTable('api_tokens')
			.set({ expires_at: new Date(Date.now() + 86_400_000) })
			.where('name', '=', 'expiring')
			.execute();
		const forever = await postJson('/api/v1/tokens', bearer(expiring), { name: 'forever', scopes: ['records:read'] });
		expect(forever.status).toBe(422);
		expect(forever.body.errors[0].pointer).toBe('/expires_at');
	});

	it('validates the body: JSON only, a name, at least one scope, a real date', async () => {
		const auth = bearer(DEMO_TOKENS.manager);
		expect((await (await api()).post('/api/v1/tokens').set(auth).set('content-type', 'text/csv').send('x')).status).toBe(415);
		expect((await (await api()).post('/api/v1/tokens').set(auth).set('content-type', 'application/json').send('{')).status).toBe(400);
		const bad = await postJson('/api/v1/tokens', auth, { name: '', scopes: [], expires_at: 'tomorrow' });
		expect(bad.status).toBe(422);
		expect(bad.body.errors.map((e: { pointer: string }) => e.pointer).sort()).toEqual(['/expires_at', '/name', '/scopes']);
		const past = await postJson('/api/v1/tokens', auth, { name: 'old', scopes: ['records:read'], expires_at: '2001-01-01T00:00:00Z' });
		expect(past.status).toBe(422);
	});

	it('an expired token answers 401', async () => {
		const t = await createToken(ownerId, ['records:read'], 'already expired');
		await getDb()
			.updateTable('api_tokens')
			.set({ expires_at: new Date(Date.now() - 1000) })
			.where('name', '=', 'already expired')
			.execute();
		expect((await (await api()).get('/api/v1/me').set(bearer(t))).status).toBe(401);
	});
});

describe('GET /api/v1/tokens pagination', () => {
	it('pages with an opaque cursor and a next link, newest first', async () => {
		const auth = { cookie: await sessionCookie(EMAIL) };
		for (let i = 0; i < 3; i++) await createToken(ownerId, ['records:read'], `page ${i}`);
		const first = await (await api()).get('/api/v1/tokens?limit=2').set(auth);
		expect(first.status).toBe(200);
		expect(first.body.items).toHaveLength(2);
		expect(first.body.next).toMatch(/^\/api\/v1\/tokens\?cursor=/);
		const second = await (await api()).get(first.body.next).set(auth);
		expect(second.body.items[0].id).toBeLessThan(first.body.items[1].id);
		expect((await (await api()).get('/api/v1/tokens?cursor=%%%').set(auth)).status).toBe(400);
		expect((await (await api()).get('/api/v1/tokens?limit=0').set(auth)).status).toBe(400);
	});
});

describe('DELETE /api/v1/tokens/{id}', () => {
	it('revokes one of the caller’s tokens; the token then answers 401; someone else’s is 404', async () => {
		const auth = { cookie: await sessionCookie(EMAIL) };
		const created = await postJson('/api/v1/tokens', auth, { name: 'to revoke', scopes: ['records:read'] });
		const other = await postJson('/api/v1/tokens', bearer(DEMO_TOKENS.manager), { name: 'manager own', scopes: ['records:read'] });

		expect((await (await api()).delete(`/api/v1/tokens/${other.body.id}`).set(auth)).status).toBe(404);
		const del = await (await api()).delete(`/api/v1/tokens/${created.body.id}`).set(auth);
		expect(del.status).toBe(204);
		expect((await (await api()).get('/api/v1/me').set(bearer(created.body.token))).status).toBe(401);
		expect((await (await api()).delete(`/api/v1/tokens/${created.body.id}`).set(auth)).status).toBe(404);

		const audit = await getDb()
			.selectFrom('audit_log')
			.select(['action', 'detail'])
			.where('subject_user_id', '=', ownerId)
			.where('action', 'in', ['token-created', 'token-revoked'])
			.execute();
		expect(audit.some((a) => a.action === 'token-created' && a.detail.token === created.body.id)).toBe(true);
		expect(audit.some((a) => a.action === 'token-revoked' && a.detail.token === created.body.id)).toBe(true);
		await (await api()).delete(`/api/v1/tokens/${other.body.id}`).set(bearer(DEMO_TOKENS.manager));
	});
});

describe('account page and admin token pages', () => {
	it('the account page creates a token, shows it once, and lists it afterwards without the secret', async () => {
		const cookie = await sessionCookie(EMAIL);
		const res = await postForm(
			'/account?/createToken',
			{ name: 'from the page', scopes: ['records:read', 'rollups:read'], expires_in_days: '30' },
			cookie
		);
		expect(res.status).toBe(200);
		const token = res.text.match(/value="(rnl_[A-Za-z0-9_-]+)"/)?.[1];
		expect(token).toBeDefined();
		expect(res.text).toContain('it is shown only this once');
		const page = await (await api()).get('/account').set('cookie', cookie);
		expect(page.text).toContain('from the page');
		expect(page.text).not.toContain(token!);
		const row = await getDb().selectFrom('api_tokens').select('expires_at').where('name', '=', 'from the page').executeTakeFirstOrThrow();
		expect(Math.round((row.expires_at!.getTime() - Date.now()) / 86_400_000)).toBe(30);
	});

	it('the account page refuses a scope outside the role', async () => {
		const res = await postForm('/account?/createToken', { name: 'sneaky', scopes: ['admin'] }, await sessionCookie(EMAIL));
		expect(res.status).toBe(400);
		expect(res.text).toContain('Not a scope you can grant: admin.');
	});

	it('an admin lists every live token and revokes any of them', async () => {
		const t = await createToken(ownerId, ['records:read'], 'admin will revoke');
		const id = (await getDb().selectFrom('api_tokens').select('id').where('name', '=', 'admin will revoke').executeTakeFirstOrThrow()).id;
		const admin = await sessionCookie('admin@runnel.test');
		const list = await (await api()).get('/admin/tokens').set('cookie', admin);
		expect(list.status).toBe(200);
		expect(list.text).toContain('admin will revoke');
		expect(list.text).toContain('Token Owner');
		const res = await postForm('/admin/tokens?/revoke', { id: String(id) }, admin);
		expect(res.status).toBe(200);
		expect((await (await api()).get('/api/v1/me').set(bearer(t))).status).toBe(401);
		const audit = await getDb()
			.selectFrom('audit_log')
			.select(['actor_user_id'])
			.where('action', '=', 'token-revoked')
			.orderBy('id', 'desc')
			.executeTakeFirstOrThrow();
		expect(audit.actor_user_id).toBe(await userIdOf('admin@runnel.test'));
	});
});
