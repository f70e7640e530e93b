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

describe('home page in Chromium', () => {
	it('renders in Public Sans from our own origin, stays on 127.0.0.1, passes axe, and is photographed', async () => {
		const page = await browser.newPage();
		await page.goto(app.origin + '/');
		await expect(page.getByRole('heading', { level: 1 })).toBeDefined();
		await page.evaluate(() => document.fonts.ready);

		const family = await page.evaluate(() => getComputedStyle(document.body).fontFamily);
		expect(family).toMatch(/^"?Public Sans"?/);
		const loadedFonts = await page.evaluate(() =>
			[...document.fonts].filter((f) => f.status === 'loaded').map((f) => f.family.replace(/"/g, ''))
		);
		expect(loadedFonts).toContain('Public Sans');
		const fontRequests = browser.requests.filter((u) => /\.woff2?(\?|$)/.test(u));
		expect(fontRequests.length).toBeGreaterThan(0);
		for (const u of fontRequests) expect(u.startsWith(app.origin)).toBe(true);

		expect(foreignRequests(browser.requests)).toEqual([]);
		expect(await seriousA11yViolations(page)).toEqual([]);
		expect(await page.title()).toContain('Runnel');
		await screenshot(page, 'home');
		await page.close();
	});
});
