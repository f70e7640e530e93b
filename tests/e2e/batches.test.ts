// Batches and records pages in Chromium, signed in as district staff. Authentication: the browser sends
// the district's demo API token on every request (the app's hooks accept it for pages and API alike);
// the sign-in form replaces this once the accounts area lands.
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_TOKENS, startApp } from '../helpers/app';
import { DEMO_DIR } from '../helpers/batches';
import { foreignRequests, launch, screenshot, seriousA11yViolations, type Browser } from '../helpers/browser';

let app: Awaited<ReturnType<typeof startApp>>;
let browser: Browser;

beforeAll(async () => {
	app = await startApp();
	browser = await launch();
	await browser.context.setExtraHTTPHeaders({ authorization: `Bearer ${DEMO_TOKENS.district}` });
});
afterAll(async () => {
	await browser?.close();
	await app?.close();
});

describe('batches page', () => {
	it('district staff upload the clean demo file: progress, then the result', async () => {
		const page = await browser.newPage();
		await page.goto(`${app.origin}/batches`);
		await expect(page.getByRole('heading', { level: 1, name: 'Batches' }).isVisible()).resolves.toBe(true);
		expect(await seriousA11yViolations(page)).toEqual([]);

		await page.getByLabel('Choose a file…').setInputFiles(path.join(DEMO_DIR, 'clean.csv'));
		await page.getByText('Chosen: clean.csv').waitFor();
		await page.getByLabel(/Save the valid rows/).check();
		await page.getByRole('button', { name: 'Send' }).click();
		await page.waitForURL(/\/batches\/\d+$/);
		// Progress first (waiting or checking), or already the result on a fast machine.
		await page.getByRole('status').first().waitFor();
		await page.getByRole('heading', { name: 'Result' }).waitFor({ timeout: 60_000 });
		const status = await page.getByRole('status').first().innerText();
		expect(status).toMatch(/rows saved/);
		await expect(page.getByText('No findings: every row passed every check.').isVisible()).resolves.toBe(true);
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'batch-clean-result');
		expect(foreignRequests(browser.requests)).toEqual([]);
		await page.close();
	});

	it('the mistakes file in check mode shows the findings table: filter, sort, CSV link', async () => {
		const page = await browser.newPage();
		await page.goto(`${app.origin}/batches`);
		await page.getByLabel('Choose a file…').setInputFiles(path.join(DEMO_DIR, 'mistakes.csv'));
		await page.getByLabel(/Check only/).check();
		await page.getByRole('button', { name: 'Send' }).click();
		await page.waitForURL(/\/batches\/\d+$/);
		await page.getByRole('heading', { name: /^Findings/ }).waitFor({ timeout: 60_000 });
		const table = page.getByRole('table', { name: /Findings of batch/ });
		await table.waitFor();
		const rowCount = await table.locator('tbody tr').count();
		expect(rowCount).toBeGreaterThanOrEqual(12);
		await expect(page.getByRole('cell', { name: 'county_fips' }).first().isVisible()).resolves.toBe(true);

		// Filter to warnings only, then back; sort by code.
		await page.getByLabel('Severity').selectOption('warning');
		await page.waitForFunction(() =>
			[...document.querySelectorAll('tbody tr td:nth-child(3)')].every((td) => td.textContent?.includes('warning'))
		);
		await page.getByLabel('Severity').selectOption('');
		await page.waitForFunction((n) => document.querySelectorAll('tbody tr').length === n, rowCount);
		await page.getByRole('button', { name: /^Code/ }).click();
		const codes = await table.locator('tbody tr td:nth-child(4)').allInnerTexts();
		expect(codes).toEqual([...codes].sort());
		const href = await page.getByRole('link', { name: 'Download CSV' }).getAttribute('href');
		expect(href).toMatch(/\/findings\?.*format=csv/);

		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'batch-mistakes-findings');
		await page.close();
	});

	it('the records table loads from the API and links to a record page with its versions', async () => {
		const page = await browser.newPage();
		await page.goto(`${app.origin}/records`);
		const table = page.getByRole('table', { name: /Practice records/ });
		await table.waitFor({ timeout: 30_000 });
		expect(await table.locator('tbody tr').count()).toBeGreaterThan(10);
		await page.getByLabel('Status').selectOption('withdrawn');
		await page.getByRole('button', { name: 'Show records' }).click();
		await page.waitForFunction(() =>
			[...document.querySelectorAll('tbody tr td:nth-child(6)')].every((td) => td.textContent === 'withdrawn')
		);
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'records-withdrawn');
		await table.locator('tbody tr a').first().click();
		await page.waitForURL(/\/records\/\d+$/);
		await page.getByRole('heading', { name: 'Versions' }).waitFor();
		await expect(
			page
				.getByText(/from batch #\d+/)
				.first()
				.isVisible()
		).resolves.toBe(true);
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'record-versions');
		await page.close();
	});
});
