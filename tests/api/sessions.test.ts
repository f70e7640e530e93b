// Server-side sessions: the cookie, what the database keeps, sign-out, sign-out everywhere, idle and
// absolute expiry, and the safe return path after sign-in.
import { createHash } from 'node:crypto';
import request from 'supertest';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { closeDb, getDb } from '$lib/server/db';
import { appHandler } from '../helpers/app';
import { clearThrottle, createUser, postForm, setCookie, userIdOf } from '../helpers/accounts';

const EMAIL = 'sessions.person@runnel.test';
const PASSWORD = 'correct horse battery';

beforeAll(async () => {
	await createUser({ email: EMAIL, role: 'manager', password: PASSWORD, name: 'Sessions Person' });
});
beforeEach(() => clearThrottle());
afterAll(async () => {
	await clearThrottle();
	await closeDb();
});

async function signIn(next?: string) {
	const res = await postForm(next ? `/sign-in?next=${encodeURIComponent(next)}` : '/sign-in', { email: EMAIL, password: PASSWORD });
	return { res, cookie: setCookie(res) };
}

const me = async (cookie: string) =>
	request(await appHandler())
		.get('/api/v1/me')
		.set('cookie', cookie);

describe('signing in through the form', () => {
	it('sets an httpOnly, SameSite=Lax session cookie (not Secure on an http origin) and stores only its hash', async () => {
		const { res, cookie } = await signIn();
		expect(res.status).toBe(303);
		expect(res.headers.location).toBe('/');
		const raw = ([] as string[]).concat(res.headers['set-cookie'] as unknown as string[]).find((c) => c.startsWith('runnel_session='))!;
		expect(raw).toMatch(/HttpOnly/i);
		expect(raw).toMatch(/SameSite=Lax/i);
		expect(raw).toMatch(/Path=\//);
		expect(raw).not.toMatch(/;\s*Secure/i);
		const token = cookie!.split('=')[1];
		const rows = await getDb()
			.selectFrom('sessions')
			.select(['token_hash'])
			.where('user_id', '=', await userIdOf(EMAIL))
			.execute();
		const hashes = rows.map((r) => r.token_hash);
		expect(hashes).toContain(createHash('sha256').update(token).digest('hex'));
		expect(hashes).not.toContain(token);
	});

	it('the session is a principal of kind session with the full scopes of the role', async () => {
		const { cookie } = await signIn();
		const res = await me(cookie!);
		expect(res.status).toBe(200);
		expect(res.body).toMatchObject({ kind: 'session', role: 'manager', email: EMAIL });
		expect(res.body.scopes.sort()).toEqual(['dataset:read', 'records:read', 'rollups:read']);
	});

	it('returns to a local ?next= path, and never to another site', async () => {
		expect((await signIn('/account')).res.headers.location).toBe('/account');
		expect((await signIn('//evil.example/steal')).res.headers.location).toBe('/');
		expect((await signIn('https://evil.example/')).res.headers.location).toBe('/');
	});

	it('a missing field is reported beside the field, with status 400', async () => {
		const res = await postForm('/sign-in', { email: EMAIL, password: '' });
		expect(res.status).toBe(400);
		expect(res.text).toContain('Enter your password.');
		expect(setCookie(res)).toBeNull();
	});

	it('a signed-in visitor to /sign-in goes on to the next page', async () => {
		const { cookie } = await signIn();
		const res = await request(await appHandler())
			.get('/sign-in?next=/account')
			.set('cookie', cookie!)
			.redirects(0);
		expect(res.status).toBe(303);
		expect(res.headers.location).toBe('/account');
	});
});

describe('ending sessions', () => {
	it('sign-out ends the session in the database: the old cookie no longer works', async () => {
		const { cookie } = await signIn();
		expect((await me(cookie!)).status).toBe(200);
		const out = await postForm('/sign-out', {}, cookie!);
		expect(out.status).toBe(303);
		expect(out.headers.location).toBe('/sign-in?notice=signed-out');
		// Replaying the cookie the browser was told to forget:
		const again = await me(cookie!);
		expect(again.status).toBe(401);
		const token = cookie!.split('=')[1];
		const row = await getDb()
			.selectFrom('sessions')
			.select('id')
			.where('token_hash', '=', createHash('sha256').update(token).digest('hex'))
			.executeTakeFirst();
		expect(row).toBeUndefined();
	});

	it('"sign out everywhere" ends every session of the account', async () => {
		const a = (await signIn()).cookie!;
		const b = (await signIn()).cookie!;
		expect((await me(b)).status).toBe(200);
		const res = await postForm('/account?/signOutEverywhere', {}, a);
		expect(res.status).toBe(303);
		expect(res.headers.location).toBe('/sign-in?notice=signed-out-everywhere');
		expect((await me(a)).status).toBe(401);
		expect((await me(b)).status).toBe(401);
		const audit = await getDb()
			.selectFrom('audit_log')
			.select('action')
			.where('subject_user_id', '=', await userIdOf(EMAIL))
			.where('action', '=', 'sign-out-everywhere')
			.execute();
		expect(audit.length).toBeGreaterThan(0);
	});

	it('ending one other session from the account page leaves the current one', async () => {
		const a = (await signIn()).cookie!;
		const b = (await signIn()).cookie!;
		const bHash = createHash('sha256').update(b.split('=')[1]).digest('hex');
		const bId = (await getDb().selectFrom('sessions').select('id').where('token_hash', '=', bHash).executeTakeFirstOrThrow()).id;
		const res = await postForm('/account?/endSession', { id: bId }, a);
		expect(res.status).toBe(200);
		expect((await me(b)).status).toBe(401);
		expect((await me(a)).status).toBe(200);
	});

	it('a session idle for longer than the idle limit has ended', async () => {
		const { cookie } = await signIn();
		const hash = createHash('sha256').update(cookie!.split('=')[1]).digest('hex');
		await getDb()
			.updateTable('sessions')
			.set({ last_seen_at: new Date(Date.now() - 9 * 3600_000) }) // default idle limit: 8 hours
			.where('token_hash', '=', hash)
			.execute();
		expect((await me(cookie!)).status).toBe(401);
		const page = await request(await appHandler())
			.get('/account')
			.set('cookie', cookie!)
			.redirects(0);
		expect(page.status).toBe(303);
		expect(page.headers.location).toBe('/sign-in?next=%2Faccount');
	});

	it('a session past its absolute expiry has ended, however active', async () => {
		const { cookie } = await signIn();
		const hash = createHash('sha256').update(cookie!.split('=')[1]).digest('hex');
		await getDb()
			.updateTable('sessions')
			.set({ expires_at: new Date(Date.now() - 1000), last_seen_at: new Date() })
			.where('token_hash', '=', hash)
			.execute();
		expect((await me(cookie!)).status).toBe(401);
	});

	it('a made-up session cookie is simply not signed in', async () => {
		const res = await me('runnel_session=not-a-real-session');
		expect(res.status).toBe(401);
	});
});
