// Researcher rollups and the small-cell rule (dataset issue; Section 1619 of the Food, Conservation, and
// Energy Act of 2008, 7 U.S.C. 8791(b): producers' information only in statistical or aggregate form).
// Random scenarios are written in fiscal years no other test uses (the 1900s), so the ground truth —
// distinct operations per county × FY × practice — is known from the scenario itself.
import fc from 'fast-check';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, getDb } from '$lib/server/db';
import { getActiveMethodVersion } from '$lib/server/methods';
import { rebuildMethod } from '$lib/server/rollups/refresh';
import { appHandler, bearer, DEMO_TOKENS } from '../helpers/app';
import { createDistrict, insertRecords } from '../helpers/rollup-fixtures';
import { layOut, readSmallCellK, restoreSmallCellK, scenario, setSmallCellK } from '../helpers/small-cell-scenarios';

process.env.ROLLUP_POLL_MS = '3600000';
const db = getDb();
let north = 0;
let south = 0;
let southB = 0;
let savedK: unknown;

beforeAll(async () => {
	await rebuildMethod(db, await getActiveMethodVersion(db));
	savedK = await readSmallCellK(db);
	north = await createDistrict(db, 'RTN', 'Rollup researcher district North', 'RT North', ['19109', '19063']);
	south = await createDistrict(db, 'RTS', 'Rollup researcher district South', 'RT South', ['19001', '19003']);
	southB = await createDistrict(db, 'RTS2', 'Rollup researcher district South 2', 'RT South', ['19005']);
});
afterAll(async () => {
	await restoreSmallCellK(db, savedK);
	await closeDb();
});

const DISTRICT_COUNTIES = () => [
	{ id: north, county: '19109' },
	{ id: north, county: '19063' },
	{ id: south, county: '19001' },
	{ id: south, county: '19003' },
	{ id: southB, county: '19005' }
];

let run = 0;

describe('researcher rollups keep every published cell at k operations or more', () => {
	it('over random scenarios', async () => {
		const handler = await appHandler();
		await fc.assert(
			fc.asyncProperty(scenario, async ({ k, records }) => {
				run++;
				const fy0 = 1900 + run * 3; // a fresh pair of state FYs for each run
				await setSmallCellK(db, k);
				const { truth, byDistrict } = layOut(records, DISTRICT_COUNTIES(), fy0, `R${run}`);
				for (const [d, { list }] of byDistrict) await insertRecords(db, d, list);

				const res = await request(handler)
					.get(`/api/v1/rollups?group=county,fy,practice&basis=installed&fy=${fy0}..${fy0 + 1}`)
					.set(bearer(DEMO_TOKENS.researcher));
				expect(res.status).toBe(200);
				const s = res.body.small_cells;
				expect(s.k).toBe(k);
				expect(s.cells).toBe(truth.size);
				expect(s.published_as_county + s.generalised_to_region + s.generalised_to_state + s.suppressed).toBe(truth.size);
				const small = [...truth.entries()].filter(([, ops]) => ops.size < k);
				expect(s.published_as_county).toBe(truth.size - small.length);
				const cells = res.body.groupings[0].cells as Array<Record<string, unknown>>;
				for (const c of cells) {
					expect(c.operations as number).toBeGreaterThanOrEqual(k);
					expect(Object.keys(c).some((key) => key.startsWith('district'))).toBe(false);
					if (c.area_level === 'county') {
						const ops = truth.get(`${c.county_fips}|${c.fy}|${c.practice_code}`)!;
						expect(ops.size).toBeGreaterThanOrEqual(k);
						expect(c.operations).toBe(ops.size);
					} else {
						expect(c.county_fips).toBeNull();
						expect(['RT North', 'RT South', 'Statewide']).toContain(c.area_name);
					}
				}
				for (const [key] of small) {
					const [county, fy, practice] = key.split('|');
					expect(cells.some((c) => c.county_fips === county && c.fy === Number(fy) && c.practice_code === practice)).toBe(false);
				}
				// Totals are the sum of what is published (suppressed cells stay out of them).
				for (const t of res.body.groupings[0].totals) {
					const inFy = cells.filter((c) => c.fy === t.fy);
					expect(inFy.reduce((a, c) => a + (c.practices as number), 0)).toBe(t.practices);
					expect(t.operations).toBeNull();
				}
				// The same rows whatever county is asked for: filtering never changes what is generalised.
				const one = [...truth.keys()][0].split('|')[0];
				const filtered = await request(handler)
					.get(`/api/v1/rollups?group=county,fy,practice&basis=installed&fy=${fy0}..${fy0 + 1}&county=${one}`)
					.set(bearer(DEMO_TOKENS.researcher));
				expect(filtered.body.groupings[0].cells).toEqual(cells.filter((c) => c.county_fips === one));
			}),
			{ numRuns: 10 }
		);
	});
});
