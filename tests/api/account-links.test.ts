// Password reset and invitation by e-mail link: the mail lands in the outbox (mail_messages), the
// link works once, a second use is refused, links expire, nothing reveals which addresses exist.
import request from 'supertest';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { closeDb, getDb } from '$lib/server/db';
import { appHandler } from '../helpers/app';
import { clearThrottle, createUser, lastMailTo, linkIn, origin, postForm, sessionCookie, setCookie, userIdOf } from '../helpers/accounts';

const RESET_EMAIL = 'reset.person@runnel.test';
const OLD_PASSWORD = 'old password here';
const NEW_PASSWORD = 'brand new password';

beforeAll(async () => {
	await createUser({ email: RESET_EMAIL, role: 'district', districtCode: 'CWB', password: OLD_PASSWORD, name: 'Reset Person' });
});
beforeEach(() => clearThrottle());
afterAll(async () => {
	await clearThrottle();
	await closeDb();
});

const get = async (path: string, cookie?: string) => {
	const r = request(await appHandler())
		.get(path)
		.redirects(0);
	return cookie ? r.set('cookie', cookie) : r;
};
const signIn = (email: string, password: string) => postForm('/sign-in', { email, password });

describe('password reset', () => {
	it('mails a one-hour, single-use link; the link works once; a second use is refused', async () => {
		const oldSession = await sessionCookie(RESET_EMAIL);
		const ask = await postForm('/forgot-password', { email: RESET_EMAIL.toUpperCase() });
		expect(ask.status).toBe(200);
		expect(ask.text).toContain('we have sent it a link');

		const mail = await lastMailTo(RESET_EMAIL);
		expect(mail).toBeDefined();
		expect(mail!.kind).toBe('password-reset');
		expect(mail!.subject).toContain('Runnel');
		expect(mail!.status).toBe('queued');
		const link = linkIn(mail!.text_body);
		expect(link.origin).toBe(origin());
		expect(link.pathname).toMatch(/^\/reset-password\/[A-Za-z0-9_-]{40,}$/);
		// HTML version: our name, the same link, no external images or resources.
		expect(mail!.html_body).toContain('Runnel');
		expect(mail!.html_body).toContain(link.href);
		expect(mail!.html_body).not.toMatch(/<img|<link|url\(|src=/i);
		// Only a hash is stored.
		const token = link.pathname.split('/').pop()!;
		const stored = await getDb()
			.selectFrom('account_links')
			.select(['token_hash', 'expires_at', 'created_at'])
			.orderBy('id', 'desc')
			.executeTakeFirstOrThrow();
		expect(stored.token_hash).not.toContain(token);
		expect(stored.expires_at.getTime() - stored.created_at.getTime()).toBeGreaterThan(59 * 60_000);
		expect(stored.expires_at.getTime() - stored.created_at.getTime()).toBeLessThanOrEqual(60 * 60_000 + 5_000);

		const page = await get(link.pathname);
		expect(page.status).toBe(200);
		expect(page.text).toContain('Choose a new password');
		expect(page.text).toContain(RESET_EMAIL);

		const mismatch = await postForm(link.pathname, { password: NEW_PASSWORD, confirm: 'something else' });
		expect(mismatch.status).toBe(400);
		expect(mismatch.text).toContain('The two passwords do not match.');

		const done = await postForm(link.pathname, { password: NEW_PASSWORD, confirm: NEW_PASSWORD });
		expect(done.status).toBe(303);
		expect(done.headers.location).toBe('/sign-in?notice=password-reset');

		// Every earlier session has ended; the old password no longer works, the new one does.
		expect(
			(
				await request(await appHandler())
					.get('/api/v1/me')
					.set('cookie', oldSession)
			).status
		).toBe(401);
		expect((await signIn(RESET_EMAIL, OLD_PASSWORD)).status).toBe(400);
		const ok = await signIn(RESET_EMAIL, NEW_PASSWORD);
		expect(ok.status).toBe(303);
		expect(setCookie(ok)).not.toBeNull();

		// Second use: refused, and the page says so.
		const again = await postForm(link.pathname, { password: 'another password 123', confirm: 'another password 123' });
		expect(again.status).toBe(410);
		expect(again.text).toContain('This link no longer works.');
		expect((await get(link.pathname)).text).toContain('This link no longer works.');
		expect((await signIn(RESET_EMAIL, 'another password 123')).status).toBe(400);

		const actions = (
			await getDb()
				.selectFrom('audit_log')
				.select('action')
				.where('subject_user_id', '=', await userIdOf(RESET_EMAIL))
				.execute()
		).map((r) => r.action);
		expect(actions).toEqual(expect.arrayContaining(['password-reset-requested', 'password-reset']));
	});

	it('an unknown address gets the same answer and no mail', async () => {
		const before = await getDb()
			.selectFrom('mail_messages')
			.select((eb) => eb.fn.countAll<string>().as('n'))
			.executeTakeFirstOrThrow();
		const known = await postForm('/forgot-password', { email: RESET_EMAIL });
		const unknown = await postForm('/forgot-password', { email: 'nobody.here@runnel.test' });
		expect(unknown.status).toBe(known.status);
		const body = (html: string) =>
			html.match(/<div class="card mt-gutter" role="status">[\s\S]*?<\/div>/)?.[0]?.replace(/<strong>[^<]*<\/strong>/, '');
		expect(body(unknown.text)).toBeDefined();
		expect(body(unknown.text)).toBe(body(known.text));
		const after = await getDb()
			.selectFrom('mail_messages')
			.select((eb) => eb.fn.countAll<string>().as('n'))
			.executeTakeFirstOrThrow();
		expect(Number(after.n) - Number(before.n)).toBeLessThanOrEqual(1); // only the known address may get one
		expect(await lastMailTo('nobody.here@runnel.test')).toBeUndefined();
	});

	it('a newer link replaces the older one, and an expired link is refused', async () => {
		await getDb()
			.deleteFrom('account_links')
			.where('user_id', '=', await userIdOf(RESET_EMAIL))
			.execute();
		await postForm('/forgot-password', { email: RESET_EMAIL });
		const first = linkIn((await lastMailTo(RESET_EMAIL))!.text_body);
		await postForm('/forgot-password', { email: RESET_EMAIL });
		const second = linkIn((await lastMailTo(RESET_EMAIL))!.text_body);
		expect(second.href).not.toBe(first.href);
		expect((await get(first.pathname)).text).toContain('This link no longer works.');
		expect((await get(second.pathname)).text).toContain('Choose a new password');

		await getDb()
			.updateTable('account_links')
			.set({ expires_at: new Date(Date.now() - 1000) })
			.where('user_id', '=', await userIdOf(RESET_EMAIL))
			.execute();
		const late = await postForm(second.pathname, { password: NEW_PASSWORD, confirm: NEW_PASSWORD });
		expect(late.status).toBe(410);
	});

	it('no more than three reset mails an hour for one account', async () => {
		await getDb()
			.deleteFrom('account_links')
			.where('user_id', '=', await userIdOf(RESET_EMAIL))
			.execute();
		const count = async () =>
			Number(
				(
					await getDb()
						.selectFrom('mail_messages')
						.select((eb) => eb.fn.countAll<string>().as('n'))
						.where('kind', '=', 'password-reset')
						.executeTakeFirstOrThrow()
				).n
			);
		const before = await count();
		for (let i = 0; i < 5; i++) expect((await postForm('/forgot-password', { email: RESET_EMAIL })).status).toBe(200);
		expect((await count()) - before).toBe(3);
	});

	it('a malformed address is refused beside the field', async () => {
		const res = await postForm('/forgot-password', { email: 'not-an-address' });
		expect(res.status).toBe(400);
		expect(res.text).toContain('Enter an e-mail address like name@example.org.');
	});
});

describe('invitations', () => {
	const INVITEE = 'new.district.staff@runnel.test';

	it('an admin invites; the mail carries a 7-day single-use link; accepting sets the password and signs in', async () => {
		const admin = await sessionCookie('admin@runnel.test');
		const ktp = (await getDb().selectFrom('districts').select('id').where('code', '=', 'KTP').executeTakeFirstOrThrow()).id;

		const missingDistrict = await postForm(
			'/admin/users?/invite',
			{ name: 'Pat Example', email: INVITEE, role: 'district', district_id: '' },
			admin
		);
		expect(missingDistrict.status).toBe(400);
		expect(missingDistrict.text).toContain('District staff need a district.');

		const res = await postForm(
			'/admin/users?/invite',
			{ name: 'Pat Example', email: INVITEE, role: 'district', district_id: String(ktp) },
			admin
		);
		expect(res.status).toBe(200);
		expect(res.text).toContain('Invitation sent to');

		const dup = await postForm('/admin/users?/invite', { name: 'Pat Again', email: INVITEE.toUpperCase(), role: 'manager' }, admin);
		expect(dup.status).toBe(400);
		expect(dup.text).toContain('Someone already has an account with this e-mail address.');

		const mail = (await lastMailTo(INVITEE))!;
		expect(mail.kind).toBe('invitation');
		expect(mail.text_body).toContain('Kettle Prairie Conservation District');
		expect(mail.html_body).not.toMatch(/<img|src=/i);
		const link = linkIn(mail.text_body);
		expect(link.pathname).toMatch(/^\/accept-invitation\//);
		const stored = await getDb()
			.selectFrom('account_links')
			.select(['expires_at', 'created_at', 'purpose'])
			.where('user_id', '=', await userIdOf(INVITEE))
			.executeTakeFirstOrThrow();
		expect(stored.purpose).toBe('invitation');
		expect(Math.round((stored.expires_at.getTime() - stored.created_at.getTime()) / 86_400_000)).toBe(7);

		// Before accepting, the account cannot sign in (it has no password).
		expect((await signIn(INVITEE, 'anything at all')).status).toBe(400);

		const page = await get(link.pathname);
		expect(page.text).toContain('Pat Example');
		expect(page.text).toContain('District staff');

		const accepted = await postForm(link.pathname, { password: 'invited person pw', confirm: 'invited person pw' });
		expect(accepted.status).toBe(303);
		expect(accepted.headers.location).toBe('/');
		const cookie = setCookie(accepted)!;
		const me = await request(await appHandler())
			.get('/api/v1/me')
			.set('cookie', cookie);
		expect(me.body).toMatchObject({ kind: 'session', role: 'district', district_id: ktp, email: INVITEE });

		const again = await postForm(link.pathname, { password: 'hijack attempt 1', confirm: 'hijack attempt 1' });
		expect(again.status).toBe(410);
		expect((await signIn(INVITEE, 'invited person pw')).status).toBe(303);

		const actions = (
			await getDb()
				.selectFrom('audit_log')
				.select('action')
				.where('subject_user_id', '=', await userIdOf(INVITEE))
				.execute()
		).map((r) => r.action);
		expect(actions).toEqual(expect.arrayContaining(['invitation-sent', 'invitation-accepted', 'sign-in']));
	});

	it('only admins can invite', async () => {
		const manager = await sessionCookie('manager@runnel.test');
		const res = await postForm('/admin/users?/invite', { name: 'X', email: 'x.y@runnel.test', role: 'admin' }, manager);
		expect(res.status).toBe(403);
		expect(await lastMailTo('x.y@runnel.test')).toBeUndefined();
	});

	it('resending an invitation makes the earlier link stop working', async () => {
		const admin = await sessionCookie('admin@runnel.test');
		const email = 'resend.invitee@runnel.test';
		await postForm('/admin/users?/invite', { name: 'Resend Invitee', email, role: 'researcher' }, admin);
		const first = linkIn((await lastMailTo(email))!.text_body);
		const id = await userIdOf(email);
		const resend = await postForm(`/admin/users/${id}?/resendInvitation`, {}, admin);
		expect(resend.status).toBe(200);
		const second = linkIn((await lastMailTo(email))!.text_body);
		expect(second.href).not.toBe(first.href);
		expect((await get(first.pathname)).text).toContain('This invitation link no longer works.');
		expect((await get(second.pathname)).text).toContain('Resend Invitee');
	});
});
