// Sign-in abuse: throttling per account and per client address (429 + Retry-After on the API, a wait
// message on the form), no user enumeration, and the audit rows for sign-ins and failures.
import request from 'supertest';
import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from 'vitest';
import { signInWithPassword } from '$lib/server/auth/sign-in';
import { closeDb, getDb } from '$lib/server/db';
import { appHandler } from '../helpers/app';
import { clearThrottle, createUser, postForm, userIdOf } from '../helpers/accounts';

const EMAIL = 'abuse.target@runnel.test';
const PASSWORD = 'the right password';

beforeAll(async () => {
	await createUser({ email: EMAIL, role: 'researcher', password: PASSWORD, name: 'Abuse Target' });
});
beforeEach(() => clearThrottle());
afterAll(async () => {
	await clearThrottle();
	await closeDb();
});

const apiSignIn = async (email: string, password: string) =>
	request(await appHandler())
		.post('/api/v1/sessions')
		.set('content-type', 'application/json')
		.send(JSON.stringify({ email, password }));

describe('POST /api/v1/sessions', () => {
	it('signs in with the right password: 201 and a session cookie that works on the API', async () => {
		const res = await apiSignIn(EMAIL, PASSWORD);
		expect(res.status).toBe(201);
		expect(res.body.expires_at).toEqual(expect.any(String));
		const cookie = (res.headers['set-cookie'] as unknown as string[])[0].split(';')[0];
		const me = await request(await appHandler())
			.get('/api/v1/me')
			.set('cookie', cookie);
		expect(me.body).toMatchObject({ kind: 'session', role: 'researcher' });
	});

	it('behind an https origin the cookie is Secure and __Host- prefixed', async () => {
		const before = process.env.ORIGIN;
		process.env.ORIGIN = 'https://hub.example.org';
		try {
			const res = await apiSignIn(EMAIL, PASSWORD);
			const raw = (res.headers['set-cookie'] as unknown as string[])[0];
			expect(raw).toMatch(/^__Host-runnel_session=/);
			expect(raw).toMatch(/;\s*Secure/i);
			expect(raw).toMatch(/HttpOnly/i);
			expect(raw).toMatch(/SameSite=Lax/i);
			expect(raw).not.toMatch(/Domain=/i);
		} finally {
			process.env.ORIGIN = before;
		}
	});

	it('five failures answer 401; the sixth attempt is refused with 429 and Retry-After, even with the right password', async () => {
		for (let i = 1; i <= 5; i++) {
			const r = await apiSignIn(EMAIL, `wrong ${i}`);
			expect(r.status, `attempt ${i}`).toBe(401);
			expect(r.body.type).toBe('urn:runnel:problem:invalid-credentials');
		}
		const refused = await apiSignIn(EMAIL, PASSWORD);
		expect(refused.status).toBe(429);
		expect(refused.headers['content-type']).toMatch(/^application\/problem\+json/);
		const retry = Number(refused.headers['retry-after']);
		expect(retry).toBeGreaterThanOrEqual(1);
		expect(retry).toBeLessThanOrEqual(30);
		expect(refused.body.type).toBe('urn:runnel:problem:sign-in-throttled');
		expect(refused.headers['set-cookie']).toBeUndefined();
	});

	it('once the wait is over the account can sign in, and success starts the count afresh', async () => {
		for (let i = 0; i < 5; i++) await apiSignIn(EMAIL, 'wrong');
		expect((await apiSignIn(EMAIL, PASSWORD)).status).toBe(429);
		// Let the wait pass (move the last failure back in time rather than sleeping 30 s).
		await getDb()
			.updateTable('sign_in_throttle')
			.set({ last_failure_at: new Date(Date.now() - 31_000) })
			.execute();
		expect((await apiSignIn(EMAIL, PASSWORD)).status).toBe(201);
		const row = await getDb().selectFrom('sign_in_throttle').selectAll().where('key', '=', `account:${EMAIL}`).executeTakeFirst();
		expect(row).toBeUndefined();
	});

	it('keys idle for more than a day are pruned when someone signs in', async () => {
		await getDb()
			.insertInto('sign_in_throttle')
			.values([
				{ key: 'account:sprayed@runnel.test', failures: 3, last_failure_at: new Date(Date.now() - 2 * 86_400_000) },
				{ key: 'account:recent@runnel.test', failures: 3, last_failure_at: new Date() }
			])
			.execute();
		expect((await apiSignIn(EMAIL, PASSWORD)).status).toBe(201);
		const keys = (await getDb().selectFrom('sign_in_throttle').select('key').execute()).map((r) => r.key);
		expect(keys).not.toContain('account:sprayed@runnel.test');
		expect(keys).toContain('account:recent@runnel.test');
	});

	it('the wait grows: one more failure after the first wait doubles it', async () => {
		for (let i = 0; i < 5; i++) await apiSignIn(EMAIL, 'wrong');
		await getDb()
			.updateTable('sign_in_throttle')
			.set({ last_failure_at: new Date(Date.now() - 31_000) })
			.execute();
		expect((await apiSignIn(EMAIL, 'wrong again')).status).toBe(401);
		const refused = await apiSignIn(EMAIL, PASSWORD);
		expect(refused.status).toBe(429);
		expect(Number(refused.headers['retry-after'])).toBeGreaterThan(30);
		expect(Number(refused.headers['retry-after'])).toBeLessThanOrEqual(60);
	});

	it('the client address has its own, higher limit across accounts', async () => {
		for (let i = 0; i < 20; i++) expect((await apiSignIn(`nobody${i}@runnel.test`, 'x')).status).toBe(401);
		const refused = await apiSignIn(EMAIL, PASSWORD);
		expect(refused.status).toBe(429);
	});

	it('parallel guesses cannot slip past the limit', async () => {
		const results = await Promise.all(Array.from({ length: 12 }, (_, i) => apiSignIn(EMAIL, `parallel ${i}`)));
		const statuses = results.map((r) => r.status);
		expect(statuses.filter((s) => s === 401).length).toBe(5);
		expect(statuses.filter((s) => s === 429).length).toBe(7);
	});
});

describe('no user enumeration', () => {
	it('an unknown e-mail gets exactly the answer of a wrong password', async () => {
		const known = await apiSignIn(EMAIL, 'wrong password');
		const unknown = await apiSignIn('no.such.person@runnel.test', 'wrong password');
		expect(unknown.status).toBe(known.status);
		expect(unknown.body.type).toBe(known.body.type);
		expect(unknown.body.detail).toBe(known.body.detail);
		expect(unknown.headers['www-authenticate']).toBe(known.headers['www-authenticate']);

		const formKnown = await postForm('/sign-in', { email: EMAIL, password: 'wrong password' });
		const formUnknown = await postForm('/sign-in', { email: 'no.such.person@runnel.test', password: 'wrong password' });
		expect(formUnknown.status).toBe(formKnown.status);
		const message = (html: string) => html.match(/<div id="form-message"[\s\S]*?<\/div>/)?.[0];
		expect(message(formUnknown.text)).toBeDefined();
		expect(message(formUnknown.text)).toBe(message(formKnown.text));
	});

	it('an unknown e-mail still costs one full password hash (same work, so similar timing)', async () => {
		const verify = vi.fn(async () => false);
		await signInWithPassword(getDb(), { email: 'ghost@runnel.test', password: 'x', ip: null, userAgent: null }, verify);
		await signInWithPassword(getDb(), { email: EMAIL, password: 'x', ip: null, userAgent: null }, verify);
		expect(verify).toHaveBeenCalledTimes(2);
		expect(verify.mock.calls[0]).toEqual(['x', null]); // verifyPassword hashes against a dummy when the stored hash is null
		expect((verify.mock.calls[1] as unknown[])[1]).toMatch(/^scrypt\$/);
	});

	it('an unknown e-mail is throttled like a real one (the limit does not reveal which exist)', async () => {
		for (let i = 0; i < 5; i++) await apiSignIn('ghost2@runnel.test', 'x');
		expect((await apiSignIn('ghost2@runnel.test', 'x')).status).toBe(429);
	});
});

describe('the sign-in form under attack', () => {
	it('the sixth rapid failure is refused with 429, Retry-After and a wait message', async () => {
		for (let i = 0; i < 5; i++) expect((await postForm('/sign-in', { email: EMAIL, password: 'wrong' })).status).toBe(400);
		const res = await postForm('/sign-in', { email: EMAIL, password: 'wrong' });
		expect(res.status).toBe(429);
		expect(Number(res.headers['retry-after'])).toBeGreaterThan(0);
		expect(res.text).toMatch(/Too many failed sign-ins\. Wait \d+ seconds before trying again/);
	});
});

describe('audit rows', () => {
	it('records sign-ins and failures, with the address and the e-mail tried', async () => {
		const id = await userIdOf(EMAIL);
		const since = new Date(Date.now() - 1000);
		await apiSignIn(EMAIL, 'wrong');
		await apiSignIn('ghost3@runnel.test', 'wrong');
		await apiSignIn(EMAIL, PASSWORD);
		const rows = await getDb().selectFrom('audit_log').selectAll().where('at', '>=', since).orderBy('id').execute();
		const failed = rows.filter((r) => r.action === 'sign-in-failed');
		expect(failed.map((r) => r.detail.email)).toEqual(expect.arrayContaining([EMAIL, 'ghost3@runnel.test']));
		expect(failed.find((r) => r.detail.email === EMAIL)!.subject_user_id).toBe(id);
		expect(failed.find((r) => r.detail.email === 'ghost3@runnel.test')!.subject_user_id).toBeNull();
		const ok = rows.find((r) => r.action === 'sign-in' && r.subject_user_id === id)!;
		expect(ok.actor).toBe(`user:${id}`);
		expect(ok.ip).toBe('127.0.0.1');
	});
});
