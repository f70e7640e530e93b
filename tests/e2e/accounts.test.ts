// Accounts in Chromium: every demo user signs in and sees its role's navigation and home; a wrong
// password gets a clear error; the sixth rapid failure is refused with a wait message; the account and
// admin pages pass axe (no serious or critical violations) and are photographed.
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { navFor } from '$lib/nav';
import { closeDb, getDb } from '$lib/server/db';
import type { Role } from '$lib/domain/scopes';
import { sql } from 'kysely';
import { DEMO_TOKENS, startApp } from '../helpers/app';
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

describe("the manager's home", () => {
	/** Counted here straight from the tables: records open for review, and visits with no outcome past their due day. */
	async function waiting() {
		const today = new Date().toISOString().slice(0, 10);
		const reviews = await sql<{ n: number }>`select count(*)::int as n from review_queue where status = 'open'`.execute(getDb());
		const visits = await sql<{ draw_id: string; fiscal_year: number; n: number }>`
			select v.draw_id::text as draw_id, w.fiscal_year, count(*)::int as n from verification_visits v
			join verification_draws w on w.id = v.draw_id
			where v.outcome is null and v.due_on < ${today}::date group by 1, 2 order by 2 desc`.execute(getDb());
		return { reviews: reviews.rows[0].n, overdue: visits.rows.reduce((s, r) => s + r.n, 0), draws: visits.rows };
	}

	it('counts the records waiting for review and the overdue field visits, each a link to its page', async () => {
		// A sample of FY 2023 is due on that year's last day, long past: its visits are overdue.
		const drawn = await fetch(`${app.origin}/api/v1/verification/draws`, {
			method: 'POST',
			headers: { authorization: `Bearer ${DEMO_TOKENS.manager}`, 'content-type': 'application/json' },
			body: JSON.stringify({ fiscal_year: 2023, seed: 'home-overdue-2023', percent: 1, min_per_district: 1 })
		});
		expect([201, 409]).toContain(drawn.status);

		const page = await browser.newPage();
		await signIn(page, app.origin, 'manager@runnel.test');
		const reviewsLink = page.getByTestId('reviews-open');
		const visitsLink = page.getByTestId('visits-overdue');
		// Other test files may change the counts meanwhile: compare against counts that held still across the page load.
		let shown: { reviews: string; visits: string; visitsHref: string | null } | null = null;
		let expected: Awaited<ReturnType<typeof waiting>> | null = null;
		for (let attempt = 0; attempt < 3 && shown === null; attempt++) {
			const before = await waiting();
			await page.goto(`${app.origin}/`);
			const now = {
				reviews: (await reviewsLink.innerText()).trim(),
				visits: (await visitsLink.innerText()).trim(),
				visitsHref: await visitsLink.getAttribute('href')
			};
			const after = await waiting();
			if (JSON.stringify(before) === JSON.stringify(after)) {
				shown = now;
				expected = after;
			}
		}
		expect(shown, 'the counts held still across one page load').not.toBeNull();
		expect(expected!.reviews).toBeGreaterThan(0);
		expect(expected!.overdue).toBeGreaterThan(0);
		const n = (x: number) => x.toLocaleString('en-US');
		expect(shown!.reviews).toBe(`${n(expected!.reviews)} record${expected!.reviews === 1 ? '' : 's'} waiting for review`);
		expect(shown!.visits).toBe(`${n(expected!.overdue)} field visit${expected!.overdue === 1 ? '' : 's'} overdue`);
		// Links: the queue, and the newest draw with overdue visits at its Overdue list.
		expect(await page.getByRole('link', { name: shown!.reviews }).getAttribute('href')).toBe('/reviews');
		expect(shown!.visitsHref).toBe(`/verification?draw=${expected!.draws[0].draw_id}#overdue-title`);
		await checkA11y(page, 'the manager home with counts');
		await screenshot(page, 'home-manager-waiting');

		await page.getByRole('link', { name: shown!.visits }).click();
		await page.waitForURL((u) => u.pathname === '/verification');
		await page.getByRole('heading', { name: `Fiscal year ${expected!.draws[0].fiscal_year} sample` }).waitFor();
		await page.getByRole('heading', { name: `Overdue (${expected!.draws[0].n})`, exact: true }).waitFor();
		await page.goBack();
		await page.getByRole('link', { name: /waiting for review$/ }).click();
		await page.waitForURL((u) => u.pathname === '/reviews');
		await page.getByRole('heading', { level: 1 }).waitFor();
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
