// The dashboard in Chromium: map, trend chart and table drawn from /api/v1/rollups, export links, a
// district's own view; axe finds nothing serious; screenshots for a person to look at.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, getDb } from '$lib/server/db';
import { getActiveMethodVersion } from '$lib/server/methods';
import { rebuildMethod } from '$lib/server/rollups/refresh';
import { DEMO_TOKENS, startApp } from '../helpers/app';
import { foreignRequests, launch, screenshot, SCREENSHOTS, seriousA11yViolations, type Browser } from '../helpers/browser';
import { createDistrict, createTokenUser, insertRecords, type TestRecord } from '../helpers/rollup-fixtures';

let app: Awaited<ReturnType<typeof startApp>>;
let browser: Browser;
const db = getDb();
const TOKEN_E = 'rnl_test_dashboard_district';

/** A deterministic scenario over many Iowa counties, FY2019 onward (invented for the test). */
function scenario(counties: string[]): TestRecord[] {
	const out: TestRecord[] = [];
	let seed = 7;
	const rnd = () => (seed = (seed * 48271) % 2147483647) / 2147483647;
	const practices = ['605', '340', '554', '604', '656', '340', '340'];
	counties.forEach((county, ci) => {
		const n = 3 + Math.floor(rnd() * 9) + (ci % 7 === 0 ? 8 : 0);
		for (let i = 0; i < n; i++) {
			const code = practices[Math.floor(rnd() * practices.length)];
			const year = 2018 + Math.floor(rnd() * 8);
			const month = 1 + Math.floor(rnd() * 12);
			const acres = code === '340' ? 40 + Math.floor(rnd() * 300) : 20 + Math.floor(rnd() * 80);
			out.push({
				local_id: `E-${county}-${i}`,
				practice_code: code,
				county_fips: county,
				installed_on: `${year}-${String(month).padStart(2, '0')}-10`,
				extent_acres: code === '340' ? acres : null,
				drainage_area_acres: code === '340' ? null : acres,
				operation_id: `farm-${county}-${Math.floor(rnd() * 5)}`,
				cost_total_usd: Math.round(acres * (code === '340' ? 45 : 220)),
				cost_share_usd: Math.round(acres * (code === '340' ? 40 : 160))
			});
		}
	});
	return out;
}

beforeAll(async () => {
	await rebuildMethod(db, await getActiveMethodVersion(db));
	const counties = (await db.selectFrom('counties').select('fips').where('state_fips', '=', '19').orderBy('fips').execute()).map(
		(c) => c.fips
	);
	const mine = counties.filter((_, i) => i % 3 !== 1); // about two thirds of the state
	const districtId = await createDistrict(db, 'RTE', 'Rollup Dashboard Test District', 'RT Dashboard', mine.slice(0, 4));
	await createTokenUser(db, 'dashboard-district@runnel.test', 'district', districtId, TOKEN_E);
	await insertRecords(db, districtId, scenario(mine));
	app = await startApp();
	browser = await launch();
});
afterAll(async () => {
	await browser?.close();
	await app?.close();
	await closeDb();
});

describe('dashboard', () => {
	it('draws headline numbers, the county map, the trend chart and the county × FY table from the API', async () => {
		await browser.context.setExtraHTTPHeaders({ Authorization: `Bearer ${DEMO_TOKENS.manager}` });
		const page = await browser.newPage();
		const apiCalls: string[] = [];
		page.on('request', (r) => {
			if (r.url().includes('/api/v1/rollups')) apiCalls.push(r.url());
		});
		await page.goto(app.origin + '/dashboard');
		await page.getByRole('heading', { level: 1, name: /practices and estimated reductions/i }).waitFor();
		await page.getByText(/^N reduction, FY\d{4}$/).waitFor({ timeout: 20_000 });
		expect(apiCalls.length).toBeGreaterThan(0);

		// Map: 99 county shapes, most of them coloured by data (not the no-data grey), a legend.
		const paths = page.locator('svg[role="group"] path[role="img"]');
		expect(await paths.count()).toBe(99);
		const fills = await paths.evaluateAll((els) => els.map((e) => e.getAttribute('fill')));
		expect(fills.filter((f) => f !== '#eeede9').length).toBeGreaterThan(30);
		await expect(page.getByText('none counted').first().isVisible()).resolves.toBe(true);

		// Keyboard: focus a county and read its details.
		await paths.first().focus();
		const label = await paths.first().getAttribute('aria-label');
		expect(label).toMatch(/County: /);

		// Trend chart: an Observable Plot SVG with a band and a line.
		const chart = page.locator('figure svg, svg[aria-label^="Nitrogen reduction by fiscal year"]').first();
		await chart.waitFor();
		expect(await page.locator('svg[aria-label^="Nitrogen reduction by fiscal year"] path').count()).toBeGreaterThan(1);

		// Table: sortable by county.
		const table = page.getByRole('table', { name: /by county and fiscal year/i });
		await table.getByRole('button', { name: /^County/ }).click();
		const first = await table.locator('tbody tr th').first().textContent();
		await table.getByRole('button', { name: /^County/ }).click();
		const firstAfter = await table.locator('tbody tr th').first().textContent();
		expect(first).not.toBe(firstAfter);

		// Export links carry the filters.
		const xlsx = await page.getByRole('link', { name: 'Export XLSX' }).getAttribute('href');
		expect(xlsx).toMatch(/format=xlsx/);
		expect(xlsx).toMatch(/basis=in_service/);

		// Progress toward the demo goal (seeded in demo mode, labelled as a demo value).
		await page.getByText(/Progress toward the state goal/).waitFor();
		await expect(page.getByText(/a demo value, not a published target/).isVisible()).resolves.toBe(true);

		expect(foreignRequests(browser.requests)).toEqual([]);
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'dashboard-manager');
		await page.evaluate(() => window.scrollTo(0, 0));
		await page.screenshot({ path: `${SCREENSHOTS}/dashboard-manager-top.png` });

		// Changing a filter fetches again; a practice with nothing counted shows the empty state.
		const before = apiCalls.length;
		await page.getByLabel('Practice', { exact: true }).selectOption('657');
		await page.getByText(/No practices are counted for these filters/).waitFor();
		expect(apiCalls.length).toBeGreaterThan(before);
		await page.close();
	});

	it('a district sees its own district, with the district filter fixed', async () => {
		await browser.context.setExtraHTTPHeaders({ Authorization: `Bearer ${TOKEN_E}` });
		const page = await browser.newPage();
		await page.goto(app.origin + '/dashboard');
		await page.getByText(/^N reduction, FY\d{4}$/).waitFor({ timeout: 20_000 });
		expect(await page.getByLabel('District').isDisabled()).toBe(true);
		await expect(page.getByText('Rollup Dashboard Test District').first().isVisible()).resolves.toBe(true);
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'dashboard-district');
		await page.close();
	});
});
