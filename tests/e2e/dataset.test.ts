// /dataset in Chromium: a manager publishes a release through the form (progress, then the result), a
// withdrawal without a reason is refused beside the field, then with one the release stays listed as
// withdrawn; the researcher sees releases, small-cell counts, file links that download, how to verify, the
// examples and the dictionary; the researcher turns release e-mails off on the account page. axe on each.
import { Kysely, PostgresDialect } from 'kysely';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Database } from '../../src/lib/server/db/schema';
import { bearer, DEMO_TOKENS, startApp } from '../helpers/app';
import { foreignRequests, launch, screenshot, seriousA11yViolations, signIn, type Browser } from '../helpers/browser';

let app: { origin: string; close: () => Promise<void> };
let browser: Browser;
const db = new Kysely<Database>({
	dialect: new PostgresDialect({ pool: new pg.Pool({ connectionString: process.env.DATABASE_URL, max: 1 }) })
});
const VERSION = '2094.1';

beforeAll(async () => {
	app = await startApp();
	browser = await launch();
	// The dataset reads the stored estimates: wait until the hub has built them (rollups answer 200).
	for (let i = 0; i < 180; i++) {
		const res = await fetch(`${app.origin}/api/v1/rollups`, { headers: bearer(DEMO_TOKENS.manager) });
		await res.arrayBuffer();
		if (res.status !== 202) break;
		await new Promise((r) => setTimeout(r, 1000));
	}
}, 200_000);
afterAll(async () => {
	await db.updateTable('users').set({ release_mail_opt_out: false }).where('role', '=', 'researcher').execute();
	await db.destroy();
	await browser?.close();
	await app?.close();
});

describe('/dataset in Chromium', () => {
	it('a manager publishes a release with notes, then withdraws it with a reason', async () => {
		const page = await browser.newPage();
		await page.setExtraHTTPHeaders(bearer(DEMO_TOKENS.manager));
		await page.goto(app.origin + '/dataset');
		expect(await page.getByRole('heading', { level: 1 }).textContent()).toBe('Research dataset');
		await page.getByLabel('Version').fill(VERSION);
		await page.getByLabel('Release notes').fill('Browser test release: first fiscal year of reports.');
		await page.getByRole('button', { name: 'Publish release' }).click();
		await page.getByText(`Release ${VERSION} is published`).waitFor({ timeout: 120_000 });
		const row = await db.selectFrom('dataset_releases').selectAll().where('version', '=', VERSION).executeTakeFirstOrThrow();
		expect(row.status).toBe('published');
		expect(row.notes).toContain('Browser test release');
		const item = page.getByRole('listitem').filter({ has: page.getByRole('heading', { name: `Release ${VERSION}` }) });
		expect(await item.textContent()).toContain('Browser test release: first fiscal year of reports.');
		expect(await seriousA11yViolations(page)).toEqual([]);

		// Publishing the same version again says why beside the field.
		await page.getByLabel('Version').fill(VERSION);
		await page.getByRole('button', { name: 'Publish release' }).click();
		await page.getByText(/releases never change/).waitFor();
		expect(await page.getByLabel('Version').getAttribute('aria-invalid')).toBe('true');

		// Withdraw: a too-short reason is refused beside the field, then a real one is accepted.
		await item.getByText(`Withdraw release ${VERSION}…`).click();
		const reason = page.getByLabel('Reason (shown to researchers)').first();
		await reason.fill('no');
		await reason.evaluate((el) => el.removeAttribute('minlength'));
		await page.getByRole('button', { name: `Withdraw ${VERSION}` }).click();
		await page.getByText('say why, in a sentence').waitFor();
		await page.getByLabel('Reason (shown to researchers)').first().fill('Acres of one district were double counted; use the next release.');
		await page.getByRole('button', { name: `Withdraw ${VERSION}` }).click();
		await page.getByText(`Release ${VERSION} is withdrawn`).waitFor();
		const after = await db.selectFrom('dataset_releases').selectAll().where('version', '=', VERSION).executeTakeFirstOrThrow();
		expect(after.status).toBe('withdrawn');
		expect(after.withdrawn_reason).toContain('double counted');
		await screenshot(page, 'dataset-manager');
		await page.close();
	}, 180_000);

	it('the researcher sees the releases with notes, small cells, withdrawn state, downloads, verification and examples', async () => {
		// A real sign-in: the session cookie is what the file links use.
		const page = await browser.newPage();
		await signIn(page, app.origin, 'researcher@runnel.test');
		await page.goto(app.origin + '/');
		await page.getByRole('link', { name: 'Research dataset', exact: true }).first().click();
		await page.waitForURL(/\/dataset$/);
		const main = (await page.textContent('main'))!;
		expect(main).toContain(`Release ${VERSION}`);
		expect(main).toContain('Withdrawn');
		expect(main).toContain('double counted');
		expect(main).toMatch(/Small cells in 2094\.1 \(k = \d+/);
		expect(main).toContain('runnel release verify');
		expect(main).toContain('openssl dgst -sha256 -verify');
		expect(main).toContain('library(httr2)');
		expect(main).toContain('urllib.request');
		expect(main).toContain('credited_acres');
		// no publishing controls for researchers
		expect(await page.getByRole('button', { name: 'Publish release' }).count()).toBe(0);
		expect(await page.getByText(/Withdraw release/).count()).toBe(0);

		// A file link downloads the file from the API with the researcher's session.
		const href = await page.getByRole('link', { name: `README.md of release ${VERSION}` }).getAttribute('href');
		const res = await page.request.get(app.origin + href!);
		expect(res.status()).toBe(200);
		expect(await res.text()).toContain(`release ${VERSION}`);

		expect(foreignRequests(browser.requests)).toEqual([]);
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'dataset-researcher');
		await page.close();
	});

	it('the researcher turns release e-mails off and on again on the account page', async () => {
		const page = await browser.newPage();
		await page.setExtraHTTPHeaders(bearer(DEMO_TOKENS.researcher));
		await page.goto(app.origin + '/account');
		const box = page.getByLabel(/E-mail me when a new research dataset release is published/);
		expect(await box.isChecked()).toBe(true);
		await box.uncheck();
		await page.getByRole('button', { name: 'Save e-mail choice' }).click();
		await page.getByText('You will no longer get release e-mails.').waitFor();
		const me = () =>
			db.selectFrom('users').select('release_mail_opt_out').where('email', '=', 'researcher@runnel.test').executeTakeFirstOrThrow();
		expect((await me()).release_mail_opt_out).toBe(true);
		expect(await page.getByLabel(/E-mail me when/).isChecked()).toBe(false);
		expect(await seriousA11yViolations(page)).toEqual([]);
		await page.getByLabel(/E-mail me when/).check();
		await page.getByRole('button', { name: 'Save e-mail choice' }).click();
		await page.getByText('You will get an e-mail when a release is published.').waitFor();
		expect((await me()).release_mail_opt_out).toBe(false);
		await page.close();
	});
});
