// Swagger UI at /api/docs and the data dictionary at /schema, in Chromium.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startApp } from '../helpers/app';
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
});

describe('API documentation and record schema pages', () => {
	it('/api/docs renders Swagger UI from our own origin with the hub’s operations, under a strict script CSP', async () => {
		const page = await browser.newPage();
		const errors: string[] = [];
		page.on('pageerror', (e) => errors.push(String(e)));
		// Fetch the page ourselves and serve it with a CSP that forbids inline and foreign scripts.
		await page.route(`${app.origin}/api/docs`, async (route) => {
			const res = await route.fetch();
			await route.fulfill({
				response: res,
				headers: {
					...res.headers(),
					'content-security-policy': "default-src 'self'; script-src 'self'; style-src 'self' 'unsafe-inline'; img-src 'self' data:"
				}
			});
		});
		const csp: string[] = [];
		page.on('console', (m) => {
			if (/Content Security Policy/i.test(m.text())) csp.push(m.text());
		});
		await page.goto(`${app.origin}/api/docs`);
		await page.waitForSelector('.opblock-summary-path', { timeout: 30_000 });
		const paths = await page.$$eval('.opblock-summary-path', (els) => els.map((e) => e.textContent?.replace(/\u200b/g, '').trim()));
		expect(paths).toEqual(expect.arrayContaining(['/api/v1/health', '/api/v1/me', '/api/v1/schema/practice-record.json']));
		expect(await page.locator('.info .title').innerText()).toContain('Runnel API');
		expect(errors).toEqual([]);
		expect(csp).toEqual([]);
		expect(foreignRequests(browser.requests)).toEqual([]);
		await screenshot(page, 'api-docs');
		await page.close();
	});

	it('/schema shows the data dictionary, is accessible and is photographed', async () => {
		const page = await browser.newPage();
		await page.goto(`${app.origin}/schema`);
		expect(await page.getByRole('heading', { level: 1 }).innerText()).toContain('schema, version 1');
		expect(await page.locator('table caption').count()).toBeGreaterThan(5);
		expect(await page.locator('#column-operator_name').innerText()).toContain('Personal');
		expect(await page.getByRole('link', { name: 'XLSX template' }).getAttribute('href')).toBe('/api/v1/schema/practice-record.xlsx');
		expect(await seriousA11yViolations(page)).toEqual([]);
		expect(foreignRequests(browser.requests)).toEqual([]);
		await screenshot(page, 'schema');
		await page.close();
	});
});
