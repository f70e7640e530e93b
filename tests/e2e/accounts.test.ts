// Accounts in Chromium: every demo user signs in and sees its role's navigation and home; a wrong
// password gets a clear error; the sixth rapid failure is refused with a wait message; the account and
// admin pages pass axe (no serious or critical violations) and are photographed.
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { navFor } from '$lib/nav';
import { closeDb, getDb } from '$lib/server/db';
import type { Role } from '$lib/domain/scopes';
import { startApp } from '../helpers/app';
import { clearThrottle, createUser, userIdOf } from '../helpers/accounts';
import { foreignRequests, launch, screenshot, seriousA11yViolations, signIn, type Browser } from '../helpers/browser';

let app: Awaited<ReturnType<typeof startApp>>;
let browser: Browser;

const THROTTLED = 'e2e.throttled@runnel.test';

beforeAll(async () => {
	app = await startApp();
	browser = await launch();
	await createUser({ email: THROTTLED, role: 'researcher', password: 'e2e throttled password', name: 'Throttled Person' });
	await clearThrottle({ browserAccounts: true });
});
afterAll(async () => {
	await browser?.close();
	await app?.close();
	await getDb().deleteFrom('sign_in_throttle').where('key', 'like', 'account:e2e.%').execute();
	await closeDb();
});

async function navLabels(page: Page): Promise<string[]> {
	return (await page.getByRole('navigation', { name: 'Main' }).getByRole('link').allTextContents()).map((s) => s.trim());
}

async function checkA11y(page: Page, what: string) {
	expect(await seriousA11yViolations(page), `axe on ${what}`).toEqual([]);
}

async function signOut(page: Page) {
	await page.getByRole('button', { name: 'Sign out', exact: true }).click();
	await page.waitForURL((u) => u.pathname === '/sign-in');
}

describe('signing in as each demo user', () => {
	it('the sign-in page is accessible and photographed', async () => {
		const page = await browser.newPage();
		await page.goto(`${app.origin}/sign-in`);
		await page.evaluate(() => document.fonts.ready);
		await checkA11y(page, '/sign-in');
		await screenshot(page, 'sign-in');
		await page.close();
	});

	const users: Array<[string, Role, string]> = [
		['admin@runnel.test', 'admin', 'You look after the hub'],
		['manager@runnel.test', 'manager', 'Reporting districts'],
		['district@runnel.test', 'district', 'Bluestem Hills Conservation District'],
		['district2@runnel.test', 'district', 'Kettle Prairie Conservation District'],
		['researcher@runnel.test', 'researcher', 'Your access']
	];
	it.each(users)('%s signs in, sees the %s navigation and home, and signs out', async (email, role, homeText) => {
		const page = await browser.newPage();
		await signIn(page, app.origin, email);
		expect(new URL(page.url()).pathname).toBe('/');
		expect(await navLabels(page)).toEqual(navFor(role).map((i) => i.label));
		await page.getByText(homeText).first().waitFor();
		await expect(page.getByRole('heading', { level: 1 }).textContent()).resolves.toContain('Welcome');
		// Every nav link leads to a page that answers (no dead links).
		for (const item of navFor(role)) {
			const res = await page.request.get(app.origin + item.href);
			expect(res.status(), item.href).toBe(200);
		}
		await page.evaluate(() => document.fonts.ready);
		await checkA11y(page, `home of ${email}`);
		await screenshot(page, `home-${email.split('@')[0]}`);
		await signOut(page);
		await page.getByText('You are signed out.').waitFor();
		// Signed out for real: the account page sends us back to sign in.
		await page.goto(`${app.origin}/account`);
		expect(new URL(page.url()).pathname).toBe('/sign-in');
		await page.close();
	});

	it('comes back to the page asked for after signing in', async () => {
		const page = await browser.newPage();
		await page.goto(`${app.origin}/admin/audit?action=sign-in`);
		expect(new URL(page.url()).pathname).toBe('/sign-in');
		await page.getByLabel('Email').fill('admin@runnel.test');
		await page.getByLabel('Password').fill('runnel-demo');
		await page.getByRole('button', { name: /sign in/i }).click();
		await page.waitForURL((u) => u.pathname === '/admin/audit');
		expect(new URL(page.url()).search).toBe('?action=sign-in');
		await signOut(page);
		await page.close();
	});
});

describe('failed sign-ins', () => {
	it('a wrong password shows a clear error and keeps the e-mail typed', async () => {
		const page = await browser.newPage();
		await page.goto(`${app.origin}/sign-in`);
		await page.getByLabel('Email').fill('manager@runnel.test');
		await page.getByLabel('Password').fill('not the password');
		await page.getByRole('button', { name: /sign in/i }).click();
		const alert = page.getByRole('alert');
		await alert.waitFor();
		expect(await alert.textContent()).toContain('That e-mail address and password do not match an account');
		expect(await page.getByLabel('Email').inputValue()).toBe('manager@runnel.test');
		expect(new URL(page.url()).pathname).toBe('/sign-in');
		await checkA11y(page, '/sign-in with an error');
		await page.close();
		await getDb().deleteFrom('sign_in_throttle').where('key', '=', 'account:manager@runnel.test').execute();
	});

	it('the sixth rapid failure is refused with a wait message', async () => {
		const page = await browser.newPage();
		await page.goto(`${app.origin}/sign-in`);
		const alert = page.getByRole('alert');
		for (let i = 1; i <= 6; i++) {
			await page.getByLabel('Email').fill(THROTTLED);
			await page.getByLabel('Password').fill(`wrong guess ${i}`);
			await page.getByRole('button', { name: /sign in/i }).click();
			await alert.waitFor();
			await page.waitForFunction(() => !document.querySelector('button[type=submit]')?.hasAttribute('disabled'));
			const text = (await alert.textContent()) ?? '';
			if (i <= 5) expect(text, `attempt ${i}`).toContain('do not match an account');
			else expect(text).toMatch(/Too many failed sign-ins\. Wait \d+ seconds before trying again/);
		}
		await checkA11y(page, '/sign-in refused');
		await screenshot(page, 'sign-in-throttled');
		// Even the right password is refused while the wait lasts.
		await page.getByLabel('Password').fill('e2e throttled password');
		await page.getByRole('button', { name: /sign in/i }).click();
		await page.waitForFunction(() => !document.querySelector('button[type=submit]')?.hasAttribute('disabled'));
		expect(await alert.textContent()).toContain('Too many failed sign-ins');
		expect(new URL(page.url()).pathname).toBe('/sign-in');
		await page.close();
	});
});

describe('account and admin pages', () => {
	it('an admin walks through the account and admin pages: all accessible, all photographed', async () => {
		const page = await browser.newPage();
		await signIn(page, app.origin, 'admin@runnel.test');
		const districtUser = await userIdOf('district@runnel.test');
		const blh = (await getDb().selectFrom('districts').select('id').where('code', '=', 'BLH').executeTakeFirstOrThrow()).id;
		const pages: Array<[string, string, string]> = [
			['/account', 'account', 'Your account'],
			['/admin/users', 'admin-users', 'Users'],
			[`/admin/users/${districtUser}`, 'admin-user', 'Mara Quillfeather'],
			['/admin/districts', 'admin-districts', 'Districts'],
			[`/admin/districts/${blh}`, 'admin-district', 'Bluestem Hills Conservation District'],
			['/admin/tokens', 'admin-tokens', 'API tokens'],
			['/admin/audit', 'admin-audit', 'Audit log']
		];
		for (const [path, shot, heading] of pages) {
			await page.goto(app.origin + path);
			expect(await page.getByRole('heading', { level: 1 }).textContent(), path).toContain(heading);
			await checkA11y(page, path);
			await screenshot(page, shot);
		}
		await signOut(page);
		await page.close();
	});

	it('a person creates an API token on the account page; it is shown once', async () => {
		const page = await browser.newPage();
		await signIn(page, app.origin, 'district@runnel.test');
		await page.goto(`${app.origin}/account`);
		await page.getByLabel('Token name').fill('office PC nightly upload');
		await page.getByRole('button', { name: 'Create token' }).click();
		const shown = page.getByLabel('New token');
		await shown.waitFor();
		const token = await shown.inputValue();
		expect(token).toMatch(/^rnl_/);
		await checkA11y(page, '/account with a new token');
		await screenshot(page, 'account-token-created');
		const row = page.getByRole('row', { name: /office PC nightly upload/ });
		await row.waitFor();
		await page.reload();
		expect(await page.content()).not.toContain(token);
		expect(await page.getByRole('row', { name: /office PC nightly upload/ }).count()).toBe(1);
		await signOut(page);
		await page.close();
	});

	it('the public account pages (forgot password, dead links) are accessible', async () => {
		const page = await browser.newPage();
		for (const [path, shot] of [
			['/forgot-password', 'forgot-password'],
			['/reset-password/not-a-real-link', 'reset-password-dead-link'],
			['/accept-invitation/not-a-real-link', 'accept-invitation-dead-link']
		]) {
			await page.goto(app.origin + path);
			await checkA11y(page, path);
			await screenshot(page, shot);
		}
		await page.goto(`${app.origin}/forgot-password`);
		await page.getByLabel('Email').fill('somebody@runnel.test');
		await page.getByRole('button', { name: 'Send the link' }).click();
		await page.getByText('we have sent it a link').waitFor();
		await page.close();
	});

	it('nothing left the machine', () => {
		expect(foreignRequests(browser.requests)).toEqual([]);
	});
});
