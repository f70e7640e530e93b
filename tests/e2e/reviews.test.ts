// The review queue in Chromium: the manager returns a flagged demo record; the district's staff see it on
// their home page and the e-mail is in the outbox; a corrected upload through the batch API clears it.
// Then the field verification page: the manager draws a sample and records a visit. axe on every new page.
// (Pages authenticate with the demo API tokens the browser sends, as the other browser tests do.)
import { randomUUID } from 'node:crypto';
import { sql } from 'kysely';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, getDb } from '$lib/server/db';
import request from 'supertest';
import { appHandler, bearer, DEMO_TOKENS, startApp } from '../helpers/app';
import { csv, runBatch } from '../helpers/batches';
import { foreignRequests, launch, screenshot, seriousA11yViolations, type Browser } from '../helpers/browser';

let app: Awaited<ReturnType<typeof startApp>>;
let browser: Browser;

beforeAll(async () => {
	app = await startApp();
	browser = await launch();
});
afterAll(async () => {
	await browser?.close();
	await app?.close();
	await closeDb();
});

const as = (who: keyof typeof DEMO_TOKENS) => browser.context.setExtraHTTPHeaders(bearer(DEMO_TOKENS[who]));

describe('review queue in the browser', () => {
	it('manager returns a flagged demo record; the district sees it and is mailed; a corrected upload clears it', async () => {
		const db = getDb();
		// The longest-waiting open demo record of Bluestem Hills: the first one the filtered queue shows.
		const flagged = await sql<{ id: string; local_id: string }>`
			select r.id::text as id, r.local_id from review_queue q join records r on r.id = q.record_id join districts d on d.id = q.district_id
			where q.status = 'open' and d.code = 'BLH' and r.local_id like 'BLH-FLAG-%'
			order by q.opened_at, q.record_id limit 1`.execute(db);
		expect(flagged.rows.length, 'the demo data has flagged records of BLH').toBe(1);
		const { id, local_id: localId } = flagged.rows[0];

		await as('manager');
		const page = await browser.newPage();
		await page.goto(`${app.origin}/reviews?district=BLH`);
		await page.getByRole('heading', { level: 1, name: 'Review queue' }).waitFor();
		const card = page.locator('li.card', { has: page.getByRole('heading', { name: new RegExp(`^${localId}`) }) });
		await card.waitFor();
		await expect(card.getByRole('heading', { name: /^Warnings/ }).isVisible()).resolves.toBe(true);
		await expect(card.getByRole('heading', { name: 'Design screening' }).isVisible()).resolves.toBe(true);
		await expect(card.getByRole('heading', { name: 'Versions' }).isVisible()).resolves.toBe(true);
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'reviews-queue');

		// A return without a comment is refused by the form (required) — then with one.
		const comment = `Please check ${localId}: the warning above needs an answer (${randomUUID().slice(0, 8)}).`;
		await card.getByLabel(/Return to the district/).check();
		await card.getByLabel(/comment for the district/).fill(comment);
		await card.getByRole('button', { name: 'Save decision' }).click();
		await page.getByRole('status').filter({ hasText: 'returned to its district' }).waitFor();
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'reviews-returned');

		// The e-mail is in the outbox (the admin's outbox page lists it).
		const mail = await db
			.selectFrom('mail_messages')
			.selectAll()
			.where('kind', '=', 'record-returned')
			.where('subject', 'like', `%${localId}%`)
			.orderBy('id', 'desc')
			.executeTakeFirstOrThrow();
		expect(mail.to_addresses).toContain('district@runnel.test');
		expect(mail.text_body).toContain(comment);
		await as('admin');
		await page.goto(`${app.origin}/admin/outbox`);
		await page.getByText(mail.subject).first().waitFor();

		// The district's home page shows the return.
		await as('district');
		await page.goto(`${app.origin}/`);
		const notice = page.getByRole('region', { name: /Returned for correction/ });
		await notice.waitFor();
		await expect(notice.getByText(comment).isVisible()).resolves.toBe(true);
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'home-district-returned');

		// A corrected version through the real batch API clears it.
		const rec = await db.selectFrom('records').select('data').where('id', '=', id).executeTakeFirstOrThrow();
		const data: Record<string, unknown> = { ...rec.data, notes: 'Checked on site with the landowner; values as built.' };
		// The demo's implausible acreage lost its decimal point: put it back.
		if (Number(data.extent_acres) > 5000) data.extent_acres = Math.round(Number(data.extent_acres) / 10) / 10;
		const header = Object.keys(data);
		const batch = await runBatch(
			DEMO_TOKENS.district,
			csv(header, [header.map((k) => (data[k] === null || data[k] === undefined ? null : (data[k] as string | number)))]),
			{ mode: 'valid', fileName: `${localId}-corrected.csv` }
		);
		expect(batch.status).toBe('done');
		expect(batch.counts.updated, JSON.stringify(batch)).toBe(1);
		const review = await db
			.selectFrom('record_reviews')
			.selectAll()
			.where('record_id', '=', id)
			.orderBy('id', 'desc')
			.executeTakeFirstOrThrow();
		expect(review.cleared_at).not.toBeNull();
		await page.goto(`${app.origin}/`);
		await page.getByRole('heading', { level: 1 }).waitFor();
		await expect(page.getByText(comment).count()).resolves.toBe(0);
		expect((await db.selectFrom('review_queue').select('status').where('record_id', '=', id).executeTakeFirstOrThrow()).status).toBe(
			'cleared'
		);
		await screenshot(page, 'home-district-cleared');
		expect(foreignRequests(browser.requests)).toEqual([]);
		await page.close();
	});

	it('field verification page: the manager draws a sample, the district records a visit; the dashboard shows the share', async () => {
		await as('manager');
		const page = await browser.newPage();
		await page.goto(`${app.origin}/verification`);
		await page.getByRole('heading', { level: 1, name: 'Field verification' }).waitFor();
		expect(await seriousA11yViolations(page)).toEqual([]);
		// By role: once any draw exists, its "Fiscal year … sample" region also carries the label text.
		await page.getByRole('textbox', { name: 'Fiscal year', exact: true }).fill('2024');
		await page.getByLabel('Seed (optional)').fill('browser-seed-2024');
		await page.getByRole('button', { name: 'Draw' }).click();
		await page.getByRole('heading', { name: 'Fiscal year 2024 sample' }).waitFor();
		await expect(page.getByTestId('seed').innerText()).resolves.toBe('browser-seed-2024');
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'verification-drawn');

		await as('district');
		await page.reload();
		const first = page.locator('details').first();
		await first.locator('summary').click();
		await first.getByRole('combobox', { name: 'Outcome' }).selectOption('in_place_working');
		await first.getByRole('button', { name: 'Save outcome' }).click();
		await page.getByRole('status').filter({ hasText: 'Saved.' }).waitFor();
		await expect(page.getByRole('heading', { name: /^Done \(1\)/ }).isVisible()).resolves.toBe(true);
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'verification-district');

		await page.goto(`${app.origin}/dashboard`);
		const summary = page.getByRole('region', { name: /Field verification/ });
		await summary.waitFor();
		// The dashboard shows the latest fiscal year's draw (another test file may have drawn a later one).
		const latest = await request(await appHandler())
			.get('/api/v1/verification/draws')
			.set(bearer(DEMO_TOKENS.district));
		const blh = latest.body.data[0].districts[0] as { share_working: number | null; working: number; done: number };
		const expected =
			blh.share_working === null ? 'no visits yet' : `${Math.round(blh.share_working * 1000) / 10}% (${blh.working} of ${blh.done})`;
		await expect(
			summary.getByRole('heading', { name: `Field verification, FY ${latest.body.data[0].fiscal_year}` }).isVisible()
		).resolves.toBe(true);
		await expect(summary.getByRole('cell', { name: expected }).isVisible()).resolves.toBe(true);
		if (latest.body.data[0].fiscal_year === 2024) expect(expected).toBe('100% (1 of 1)');
		await page.close();
	});
});
