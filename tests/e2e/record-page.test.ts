// The record page of a demo bioreactor whose design screening warns (the demo generator's deliberately
// undersized bed): the estimate, the stacking breakdown, the screening numbers with units, the warnings and
// the caution that these are screening estimates deferring to the practice standard, local codes and a
// licensed engineer or approved designer. Keyboard/screen-reader basics through axe; a screenshot to look at.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, getDb } from '$lib/server/db';
import { getActiveMethodVersion } from '$lib/server/methods';
import { rebuildMethod } from '$lib/server/rollups/refresh';
import { DEMO_TOKENS, startApp } from '../helpers/app';
import { closeTestDb, db } from '../helpers/batches';
import { foreignRequests, launch, screenshot, seriousA11yViolations, type Browser } from '../helpers/browser';

let app: Awaited<ReturnType<typeof startApp>>;
let browser: Browser;

beforeAll(async () => {
	app = await startApp();
	// Stored estimates exist once the active method's summary is built (the app's service does it after seeding).
	await rebuildMethod(getDb(), await getActiveMethodVersion(getDb()));
	browser = await launch();
	await browser.context.setExtraHTTPHeaders({ authorization: `Bearer ${DEMO_TOKENS.district}` });
});
afterAll(async () => {
	await browser?.close();
	await app?.close();
	await closeTestDb();
	await closeDb();
});

/** A demo BLH bioreactor the screening flagged when the seed loaded it (found by its stored warning). */
async function warnedBioreactor(): Promise<{ id: string; local_id: string }> {
	const r = await (
		await db()
	).query<{ id: string; local_id: string }>(
		`select r.id::text, r.local_id from records r join districts d on d.id = r.district_id
		 join record_findings f on f.record_id = r.id and f.version = r.version
		 where d.code = 'BLH' and r.practice_code = '605' and f.code = 'bioreactor-treats-under-15pct' and r.local_id like 'BLH-%'
		 order by r.id limit 1`
	);
	expect(r.rows.length, 'the demo data has a bioreactor whose screening warns').toBe(1);
	return r.rows[0];
}

describe('record page: estimate and bioreactor design screening', () => {
	it('shows the estimate, the screening with its warnings and the caution', async () => {
		const rec = await warnedBioreactor();
		const page = await browser.newPage();
		await page.goto(`${app.origin}/records/${rec.id}`);
		await page.getByRole('heading', { level: 1, name: rec.local_id }).waitFor();

		await page.getByRole('heading', { level: 2, name: 'Estimated reduction (active method)' }).waitFor();
		const estimate = page.getByRole('table', { name: /Estimated reduction in pounds per year/ });
		await expect(estimate.getByRole('rowheader', { name: 'Nitrogen (N)' }).isVisible()).resolves.toBe(true);
		// Stacked with a cover crop and nutrient management on the same field (the demo's stacked practices).
		await expect(page.getByText(/Stacked on the same field/).isVisible()).resolves.toBe(true);
		await expect(page.getByRole('table', { name: /stored estimate under each reduction method version/ }).isVisible()).resolves.toBe(true);

		await page.getByRole('heading', { level: 2, name: 'Bioreactor design screening' }).waitFor();
		const caution = page.getByRole('note').filter({ hasText: 'screening estimates, not a design' });
		await expect(caution.isVisible()).resolves.toBe(true);
		const text = await caution.innerText();
		expect(text).toMatch(/practice standard/);
		expect(text).toMatch(/local codes/);
		expect(text).toMatch(/licensed engineer or NRCS-approved designer/);
		await expect(page.getByText(/^Warnings \(\d\)$/).isVisible()).resolves.toBe(true);
		await expect(page.getByText('bioreactor-treats-under-15pct').first().isVisible()).resolves.toBe(true);
		const results = page.getByRole('table', { name: 'Results' });
		await expect(results.getByRole('rowheader', { name: 'Peak drainage flow' }).isVisible()).resolves.toBe(true);
		expect(await results.getByRole('row', { name: /Peak drainage flow/ }).innerText()).toMatch(/\d\.\d{3} cfs/);
		// The same warnings are in the record's review flags.
		await expect(page.getByRole('heading', { name: 'Flagged for review' }).isVisible()).resolves.toBe(true);

		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'record-bioreactor-screening');
		expect(foreignRequests(browser.requests)).toEqual([]);
		await page.close();
	});
});
