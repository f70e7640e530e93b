// Upkeep events in Chromium: district staff send the clean demo events file through the batches page
// (type "Upkeep events"); the events show on the record's timeline — an ordered list with dates — and a
// manager's dashboard warns "Upkeep overdue" with a count per district linking to the list. axe on each page.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_TOKENS, startApp } from '../helpers/app';
import { closeTestDb, db, DEMO_DIR } from '../helpers/batches';
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
	await closeTestDb();
});

const CLEAN = path.join(DEMO_DIR, 'events-clean.csv');
const firstLocalId = readFileSync(CLEAN, 'utf8').split(/\r?\n/)[1].split(',')[0];

describe('upkeep events', () => {
	it('district staff send the clean events file and see the events on the record timeline', async () => {
		await browser.context.setExtraHTTPHeaders({ authorization: `Bearer ${DEMO_TOKENS.district}` });
		const page = await browser.newPage();
		await page.goto(`${app.origin}/batches`);
		await page.getByLabel(/Upkeep events/).check();
		await page.getByLabel('Choose a file…').setInputFiles(CLEAN);
		await page.getByText('Chosen: events-clean.csv').waitFor();
		await page.getByLabel(/Save the valid rows/).check();
		expect(await seriousA11yViolations(page)).toEqual([]);
		await page.getByRole('button', { name: 'Send' }).click();
		await page.waitForURL(/\/batches\/\d+$/);
		await page.getByRole('heading', { name: 'Result' }).waitFor({ timeout: 60_000 });
		await expect(page.getByText('upkeep events', { exact: false }).first().isVisible()).resolves.toBe(true);
		await expect(page.getByText('No findings: every row passed every check.').isVisible()).resolves.toBe(true);

		const rec = await (
			await db()
		).query<{ id: string }>(
			`select r.id::text as id from records r join districts d on d.id = r.district_id where d.code = 'BLH' and r.local_id = $1`,
			[firstLocalId]
		);
		await page.goto(`${app.origin}/records/${rec.rows[0].id}`);
		const timeline = page.getByRole('list', { name: `Upkeep events of ${firstLocalId}, oldest first` });
		await timeline.waitFor();
		await expect(page.getByRole('heading', { level: 2, name: 'Upkeep events' }).isVisible()).resolves.toBe(true);
		const dates = await timeline.locator('time').evaluateAll((ts) => ts.map((t) => t.getAttribute('datetime')!));
		// The file's four events of this bioreactor are there, in date order with the seeded ones.
		for (const d of ['2026-11-16', '2026-11-18', '2026-11-19', '2026-11-24']) expect(dates).toContain(d);
		expect([...dates].sort()).toEqual(dates);
		const topUp = timeline.locator('li', { has: page.locator('time[datetime="2026-11-18"]') });
		await expect(topUp.innerText()).resolves.toMatch(/Media top-up[\s\S]*35 cubic yards of media added/);
		const setting = timeline.locator('li', { has: page.locator('time[datetime="2026-11-19"]') });
		await expect(setting.innerText()).resolves.toMatch(/Structure setting change[\s\S]*Stop boards set to 30 in\s+at structure inlet/);
		await expect(page.getByTestId('upkeep-status').innerText()).resolves.toContain('Last media top-up or inspection: November 18, 2026');
		expect(await seriousA11yViolations(page)).toEqual([]);
		await timeline.last().scrollIntoViewIfNeeded();
		await screenshot(page, 'record-events-timeline');
		expect(foreignRequests(browser.requests)).toEqual([]);
		await page.close();
	});

	it('the manager dashboard warns "Upkeep overdue" per district and links to the list', async () => {
		await browser.context.setExtraHTTPHeaders({ authorization: `Bearer ${DEMO_TOKENS.manager}` });
		const page = await browser.newPage();
		await page.goto(`${app.origin}/dashboard`);
		const warning = page.getByTestId('upkeep-overdue');
		await warning.waitFor();
		await expect(warning.getByRole('heading', { name: 'Upkeep overdue' }).isVisible()).resolves.toBe(true);
		const links = warning.getByRole('link');
		// The demo generator leaves at least two bioreactors neglected in every one of the six districts (other
		// tests may record upkeep for up to two of Bluestem Hills' three).
		// Six demo districts at least (other tests may add districts and bioreactors of their own).
		expect(await links.count()).toBeGreaterThanOrEqual(6);
		const blh = warning.getByRole('link', { name: /^Bluestem Hills Conservation District: \d+ bioreactors?$/ });
		const first = await blh.innerText();
		const n = Number(/: (\d+) bioreactor/.exec(first)![1]);
		expect(n).toBeGreaterThanOrEqual(1);
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'dashboard-upkeep-overdue');
		await blh.click();
		await page.waitForURL(/\/records\/upkeep-overdue\?district=/);
		const table = page.getByRole('table', { name: 'Bioreactors with overdue upkeep' });
		await table.waitFor();
		expect(await table.locator('tbody tr').count()).toBe(n);
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'upkeep-overdue-list');
		await page.close();
	});
});
