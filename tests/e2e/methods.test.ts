// The reduction methods page and the admin form in Chromium. Signs in with a demo bearer token sent as a
// header (the same principal the sign-in session gives).
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import { Kysely, PostgresDialect } from 'kysely';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEFAULT_METHOD } from '../../src/lib/domain/reduction-method';
import type { Database } from '../../src/lib/server/db/schema';
import { appHandler, bearer, DEMO_TOKENS } from '../helpers/app';
import { foreignRequests, launch, screenshot, seriousA11yViolations, type Browser } from '../helpers/browser';

let app: { origin: string; close: () => Promise<void> };
let browser: Browser;
const db = new Kysely<Database>({
	dialect: new PostgresDialect({ pool: new pg.Pool({ connectionString: process.env.DATABASE_URL, max: 1 }) })
});
const VERSION = `e2e-${Date.now().toString(36)}.1`;

/**
 * The built app on a free port. adapter-node takes its origin from ORIGIN (http://127.0.0.1:3000 in the
 * tests), so form posts from this port would fail the framework's CSRF origin check; the server below
 * presents the browser's own origin as ORIGIN, as a reverse proxy in front of the app would.
 */
async function startAppForForms() {
	const handler = await appHandler();
	const configured = process.env.ORIGIN!;
	let origin = '';
	const server = http.createServer((req, res) => {
		if (req.headers.origin === origin) req.headers.origin = configured;
		handler(req, res);
	});
	await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
	origin = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
	return {
		origin,
		close: () =>
			new Promise<void>((r) => {
				server.closeAllConnections();
				server.close(() => r());
			})
	};
}

beforeAll(async () => {
	app = await startAppForForms();
	browser = await launch();
});
afterAll(async () => {
	await db
		.updateTable('settings')
		.set({ value: JSON.stringify(DEFAULT_METHOD.version) })
		.where('key', '=', 'active_method_version')
		.execute();
	await db.destroy();
	await browser?.close();
	await app?.close();
});

describe('/methods in Chromium', () => {
	it('shows the active method with its sources, the worked example and the screening caution; passes axe', async () => {
		const page = await browser.newPage();
		await page.setExtraHTTPHeaders(bearer(DEMO_TOKENS.manager));
		await page.goto(app.origin + '/methods');
		expect(await page.getByRole('heading', { level: 1 }).textContent()).toBe('Reduction methods');
		const body = await page.textContent('main');
		expect(body).toContain('ia-2017.1');
		expect(body).toContain('from memory');
		expect(body).toContain('Illinois Nutrient Loss Reduction Strategy');
		expect(body).toMatch(/screening estimates, not a design/);
		expect(body).toContain('1.050 cfs'); // peak flow of the worked example (50 ac at 0.5 in/day)
		expect(body).toContain('2,431 ft³'); // bed needed at 3 h
		// managers see no admin controls
		expect(await page.getByRole('link', { name: /Add a version/ }).count()).toBe(0);
		expect(foreignRequests(browser.requests)).toEqual([]);
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'methods');
		await page.close();
	});

	it('an admin copies the active method, changes a value with its source, stores it, and makes it active', async () => {
		const page = await browser.newPage();
		await page.setExtraHTTPHeaders(bearer(DEMO_TOKENS.admin));
		await page.goto(app.origin + '/methods');
		await page.getByRole('link', { name: /Add a version based on ia-2017.1/ }).click();
		await page.waitForURL(/\/methods\/new/);
		expect(await seriousA11yViolations(page)).toEqual([]);

		// Submitting a change without naming its source keeps the values and says what to fix.
		await page.getByLabel('New version name').fill(VERSION);
		await page.getByLabel('Label', { exact: true }).fill('Browser test edition');
		await page.getByLabel('605 Denitrifying Bioreactor: N mean reduction, percent').fill('47');
		await page.getByRole('button', { name: 'Store the new version' }).click();
		await page.getByRole('alert').waitFor();
		expect(await page.getByRole('alert').textContent()).toMatch(/1\s+problem to fix/);
		expect(await page.getByLabel('New version name').inputValue()).toBe(VERSION);
		expect(await page.getByLabel('605 Denitrifying Bioreactor: N mean reduction, percent').inputValue()).toBe('47');
		await screenshot(page, 'methods-new-error');

		await page.getByLabel('Title', { exact: true }).fill('Browser test source table');
		await page.getByLabel('Publisher', { exact: true }).fill('Test publisher');
		await page.getByLabel('Year', { exact: true }).fill('2026');
		await page.getByRole('button', { name: 'Store the new version' }).click();
		await page.waitForURL(/\/methods\?version=/);
		expect(await page.textContent('main')).toContain(`Method version ${VERSION} was stored`);
		expect(await page.textContent('main')).toContain('Browser test source table');

		await page.getByRole('button', { name: `Make ${VERSION} active` }).click();
		await page.getByText(`${VERSION} is now the active method`).waitFor();
		const row = await db.selectFrom('settings').select('value').where('key', '=', 'active_method_version').executeTakeFirstOrThrow();
		expect(row.value).toBe(VERSION);
		const stored = await db.selectFrom('reduction_methods').select('method').where('version', '=', VERSION).executeTakeFirstOrThrow();
		expect(stored.method.practices.find((p) => p.practice_code === '605')!.n).toMatchObject({ mean: 0.47, sd: 0.21 });
		await screenshot(page, 'methods-admin');
		await page.close();
	});
});
