// GET /api/v1/rollups against a scenario of our own (test districts RTA and RTB, records written through
// the same transaction hook the intake pipeline calls). The expected numbers are worked by hand in this
// file from the records and the active method's published efficiencies and baseline — not from the code
// under test. Sources of those numbers: the default method (Iowa Nutrient Reduction Strategy science
// assessment, ISU 2013/2017: bioreactor 43 % [S], SD 21 [M]; cereal rye 31 % SD 29 [S]) and its statewide
// baseline (Illinois NLRS 2015: 10 lb N, 1.4 lb P per acre per year [S]).
import ExcelJS from 'exceljs';
import { parse } from 'csv-parse/sync';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, getDb } from '$lib/server/db';
import { createMethod, getMethod, setActiveMethod } from '$lib/server/methods';
import { rebuildMethod } from '$lib/server/rollups/refresh';
import { hashToken } from '$lib/server/auth/tokens';
import { DEFAULT_METHOD, type ReductionMethod } from '$lib/domain/reduction-method';
import { RollupMeasures, RollupResponse } from '$lib/schema/rollups';
import { appHandler, bearer, DEMO_TOKENS } from '../helpers/app';
import { createDistrict, createTokenUser, insertRecords, updateRecords, type TestRecord } from '../helpers/rollup-fixtures';

process.env.ROLLUP_POLL_MS = '3600000'; // this file drives rebuilds itself
const db = getDb();
const TOKEN_A = 'rnl_test_rollups_district_a';
const TOKEN_B = 'rnl_test_rollups_district_b';
const TOKEN_NO_SCOPE = 'rnl_test_rollups_records_only';
let districtA = 0;
let districtB = 0;
let ids: Record<string, string> = {};
let original = '';

const round = (x: number, d: number) => Math.round(x * 10 ** d) / 10 ** d;
const clip = (x: number) => Math.min(1, Math.max(0, x));

/** Efficiency triple of a practice under a method, as the method table states it. */
function eff(m: ReductionMethod, code: string, k: 'n' | 'p') {
	const v = m.practices.find((p) => p.practice_code === code)![k];
	if (!v) return { mean: 0, low: 0, high: 0 };
	return { mean: v.mean, low: clip(v.mean - (v.sd ?? 0)), high: clip(v.mean + (v.sd ?? 0)) };
}
/**
 * A stacked practice's share: (1 − Π(1 − eⱼ)) × wᵢ / Σwⱼ (the stacking rule of the rollups issue), with the
 * weights w the practices' mean efficiencies in every scenario (low and high too), so low ≤ mean ≤ high.
 */
function share(effs: number[], i: number, weights: number[] = effs) {
	const sum = weights.reduce((a, e) => a + e, 0);
	if (sum === 0) return 0;
	return ((1 - effs.reduce((a, e) => a * (1 - e), 1)) * weights[i]) / sum;
}

const RECORDS: TestRecord[] = [
	// County 19169 (Story), bioreactors (605) and one cover crop stacked with a bioreactor on field F-7.
	{
		local_id: 'A1',
		practice_code: '605',
		county_fips: '19169',
		installed_on: '2024-08-15',
		drainage_area_acres: 50,
		operation_id: 'farm-1',
		cost_total_usd: 12000,
		cost_share_usd: 9000,
		huc12: '070801050101'
	},
	{
		local_id: 'A2',
		practice_code: '605',
		county_fips: '19169',
		installed_on: '2024-10-01',
		drainage_area_acres: 80,
		operation_id: 'farm-2',
		field_id: 'F-7',
		cost_total_usd: 15000.55,
		cost_share_usd: 11250.41,
		huc12: '070801050102'
	},
	{
		local_id: 'A3',
		practice_code: '340',
		county_fips: '19169',
		installed_on: '2024-09-20',
		extent_acres: 80,
		operation_id: 'farm-2',
		field_id: 'F-7',
		cost_total_usd: 2400,
		cost_share_usd: 2400
	},
	// Installed in FY2025, withdrawn in FY2026: still counted in FY2025.
	{
		local_id: 'A4',
		practice_code: '605',
		county_fips: '19169',
		installed_on: '2025-05-30',
		drainage_area_acres: 40,
		operation_id: 'farm-3',
		cost_total_usd: 9000,
		cost_share_usd: 6000,
		status: 'withdrawn',
		withdrawn_on: '2026-03-01'
	},
	// First day of state FY2026.
	{
		local_id: 'A5',
		practice_code: '605',
		county_fips: '19169',
		installed_on: '2025-07-01',
		drainage_area_acres: 60,
		operation_id: 'farm-5',
		cost_total_usd: 10000
	},
	// 15-year lifespan: last day 2025-04-29 … in service in FY2025; the next one ran out 2024-06-29, before FY2025.
	{
		local_id: 'A6',
		practice_code: '605',
		county_fips: '19169',
		installed_on: '2010-04-30',
		drainage_area_acres: 100,
		operation_id: 'farm-4',
		cost_total_usd: 8000.1
	},
	{
		local_id: 'A7',
		practice_code: '605',
		county_fips: '19169',
		installed_on: '2009-06-30',
		drainage_area_acres: 70,
		operation_id: 'farm-6'
	},
	// Another county of the same district.
	{
		local_id: 'A8',
		practice_code: '340',
		county_fips: '19015',
		installed_on: '2024-11-11',
		extent_acres: 120.5,
		operation_id: 'farm-7',
		cost_total_usd: 3000.25,
		cost_share_usd: 3000.25
	}
];

async function rollup(query: string, token: string = DEMO_TOKENS.manager) {
	return request(await appHandler())
		.get(`/api/v1/rollups?${query}`)
		.set(bearer(token));
}

beforeAll(async () => {
	original = await (await import('$lib/server/methods')).getActiveMethodVersion(db);
	await rebuildMethod(db, original);
	districtA = await createDistrict(db, 'RTA', 'Rollup Test District A', 'Rollup Test Region', ['19169', '19015']);
	districtB = await createDistrict(db, 'RTB', 'Rollup Test District B', 'Rollup Test Region', ['19153']);
	await createTokenUser(db, 'rollups-a@runnel.test', 'district', districtA, TOKEN_A);
	await createTokenUser(db, 'rollups-b@runnel.test', 'district', districtB, TOKEN_B);
	const noScope = await createTokenUser(db, 'rollups-noscope@runnel.test', 'district', districtA, TOKEN_NO_SCOPE);
	await db
		.updateTable('api_tokens')
		.set({ scopes: ['records:read'] })
		.where('token_hash', '=', hashToken(noScope))
		.execute();
	const inserted = await insertRecords(db, districtA, RECORDS);
	ids = Object.fromEntries(RECORDS.map((r, i) => [r.local_id, inserted[i]]));
	await insertRecords(db, districtB, [
		{
			local_id: 'B1',
			practice_code: '605',
			county_fips: '19153',
			installed_on: '2024-12-01',
			drainage_area_acres: 30,
			operation_id: 'farm-b1',
			cost_total_usd: 7000
		}
	]);
});

afterAll(async () => {
	if (original) {
		const current = await (await import('$lib/server/methods')).getActiveMethodVersion(db);
		if (current !== original) await setActiveMethod(db, original, 'test');
		await rebuildMethod(db, original);
	}
	await closeDb();
});

/** The county × FY × practice cell (19169, FY2025, 605) worked by hand under a method. */
function expectedCell(m: ReductionMethod, basis: 'installed' | 'in_service') {
	const base = m.baseline.counties.find((c) => c.county_fips === '19169') ?? m.baseline.statewide;
	const b = { n: eff(m, '605', 'n'), rye: eff(m, '340', 'n'), p: eff(m, '605', 'p'), ryeP: eff(m, '340', 'p') };
	const out = { n: { mean: 0, low: 0, high: 0 }, p: { mean: 0, low: 0, high: 0 } };
	const add = (acres: number, nShare: { mean: number; low: number; high: number }, pShare: { mean: number; low: number; high: number }) => {
		for (const part of ['mean', 'low', 'high'] as const) {
			out.n[part] += acres * base.n_lb_per_ac_yr * nShare[part];
			out.p[part] += acres * base.p_lb_per_ac_yr * pShare[part];
		}
	};
	const stacked = (x: typeof b.n, y: typeof b.n) => ({
		mean: share([x.mean, y.mean], 0),
		low: share([x.low, y.low], 0, [x.mean, y.mean]),
		high: share([x.high, y.high], 0, [x.mean, y.mean])
	});
	// A1 alone on 50 ac; A2 on 80 ac stacked with the cover crop A3; A4 alone on 40 ac.
	add(50, b.n, b.p);
	add(80, stacked(b.n, b.rye), stacked(b.p, b.ryeP));
	add(40, b.n, b.p);
	let practices = 3;
	let acres = 170;
	let cost = 12000 + 15000.55 + 9000;
	const costShare = 9000 + 11250.41 + 6000;
	const ops = new Set(['farm-1', 'farm-2', 'farm-3']);
	if (basis === 'in_service') {
		add(100, b.n, b.p); // A6, in its fifteenth year
		practices += 1;
		acres += 100;
		cost += 8000.1;
		ops.add('farm-4');
	}
	return { practices, operations: ops.size, acres, cost, costShare, ...out };
}

function expectCellMatches(cell: Record<string, number>, e: ReturnType<typeof expectedCell>) {
	expect(cell.practices).toBe(e.practices);
	expect(cell.operations).toBe(e.operations);
	expect(cell.credited_acres).toBe(round(e.acres, 2));
	// To the cent and the tenth of a pound.
	expect(cell.cost_usd).toBe(round(e.cost, 2));
	expect(cell.cost_share_usd).toBe(round(e.costShare, 2));
	expect(cell.n_lb_yr_mean).toBe(round(e.n.mean, 1));
	expect(cell.n_lb_yr_low).toBe(round(e.n.low, 1));
	expect(cell.n_lb_yr_high).toBe(round(e.n.high, 1));
	expect(cell.p_lb_yr_mean).toBe(round(e.p.mean, 1));
	expect(cell.p_lb_yr_low).toBe(round(e.p.low, 1));
	expect(cell.p_lb_yr_high).toBe(round(e.p.high, 1));
	expect(cell.usd_per_lb_n).toBe(round(e.cost / e.n.mean, 2));
}

const CELL_QUERY = 'group=county,fy,practice&fy=2025&district=RTA&county=19169&practice=605';

describe('one county × FY × practice cell, recomputed by hand', () => {
	it('installed basis, state FY2025 (July 2024 – June 2025): A1, A2 (stacked with a cover crop) and A4 (withdrawn later)', async () => {
		const active = (await getMethod(db, original))!.method;
		// Sanity check of the hand method against the published 43 %: A1 alone = 50 ac × 10 lb × 0.43 = 215 lb.
		expect(50 * active.baseline.statewide.n_lb_per_ac_yr * eff(active, '605', 'n').mean).toBeCloseTo(50 * 10 * 0.43, 9);
		const res = await rollup(`${CELL_QUERY}&basis=installed`);
		expect(res.status).toBe(200);
		expect(res.body.method_version).toBe(original);
		expect(res.body.fy_basis).toBe('state');
		expect(res.body.basis).toBe('installed');
		expect(res.body.fy).toEqual({ from: 2025, to: 2025 });
		const cells = res.body.groupings[0].cells;
		expect(cells).toHaveLength(1);
		expect(cells[0]).toMatchObject({ fy: 2025, county_fips: '19169', county_name: 'Story', practice_code: '605' });
		expectCellMatches(cells[0], expectedCell(active, 'installed'));
		expect(res.body.groupings[0].totals).toEqual([expect.objectContaining({ fy: 2025, practices: 3 })]);
	});

	it('in-service basis adds the bioreactor in its last lifespan year, not the one whose lifespan ran out a day before FY2025', async () => {
		const active = (await getMethod(db, original))!.method;
		const res = await rollup(`${CELL_QUERY}&basis=in_service`);
		expect(res.status).toBe(200);
		expectCellMatches(res.body.groupings[0].cells[0], expectedCell(active, 'in_service'));
	});

	it('federal FY2025 (October 2024 – September 2025) counts A2, A4 and A5 as installed', async () => {
		const res = await rollup(`${CELL_QUERY}&basis=installed&fy_basis=federal`);
		expect(res.status).toBe(200);
		expect(res.body.fy_basis).toBe('federal');
		const c = res.body.groupings[0].cells[0];
		expect(c.practices).toBe(3);
		expect(c.credited_acres).toBe(80 + 40 + 60);
		expect(c.cost_usd).toBe(round(15000.55 + 9000 + 10000, 2));
	});

	it('groupings by HUC-8, district and FY agree with the per-FY totals', async () => {
		const res = await rollup('group=huc8|district|fy&fy=2024..2026&district=RTA&basis=in_service');
		expect(res.status).toBe(200);
		const [huc, dist, fy] = res.body.groupings;
		expect(huc.group).toEqual(['fy', 'huc8']);
		expect(dist.group).toEqual(['fy', 'district']);
		expect(fy.group).toEqual(['fy']);
		const hucs = new Set(huc.cells.map((c: { huc8: string | null }) => c.huc8));
		expect(hucs.has('07080105')).toBe(true);
		expect(hucs.has(null)).toBe(true); // records without a HUC-12
		for (const g of [huc, dist, fy]) {
			for (const t of g.totals) {
				const inFy = g.cells.filter((c: { fy: number }) => c.fy === t.fy);
				expect(
					round(
						inFy.reduce((a: number, c: { n_lb_yr_mean: number }) => a + c.n_lb_yr_mean, 0),
						1
					)
				).toBeCloseTo(t.n_lb_yr_mean, 0);
				expect(inFy.reduce((a: number, c: { practices: number }) => a + c.practices, 0)).toBe(t.practices);
			}
		}
		expect(dist.cells.every((c: { district_code: string }) => c.district_code === 'RTA')).toBe(true);
		// HUC-8 07080105 in FY2025 holds A1 and A2: one operation each, so 2 distinct operations.
		const h = huc.cells.find((c: { huc8: string; fy: number }) => c.huc8 === '07080105' && c.fy === 2025);
		expect(h.operations).toBe(2);
	});

	it('every cell has exactly the published fields for its grouping, names included, and parses with the schema', async () => {
		const res = await rollup('group=county,fy,practice|district,fy|huc8,fy&fy=2024..2026&district=RTA');
		expect(res.status).toBe(200);
		expect(() => RollupResponse.parse(res.body)).not.toThrow();
		const [byCounty, byDistrict, byHuc] = res.body.groupings as { cells: Record<string, unknown>[] }[];
		const measures = Object.keys(RollupMeasures.shape);
		const keys = (c: Record<string, unknown>) => Object.keys(c).sort();
		expect(byCounty.cells.length).toBeGreaterThan(0);
		for (const c of byCounty.cells) {
			expect(keys(c)).toEqual([...measures, 'fy', 'county_fips', 'county_name', 'practice_code', 'practice_name'].sort());
			// County names from the Census county list (Story 19169, Boone 19015); practice names from the practices table.
			expect(c.county_name).toBe({ '19169': 'Story', '19015': 'Boone' }[c.county_fips as string]);
			const practice = await db
				.selectFrom('practices')
				.select('name')
				.where('code', '=', c.practice_code as string)
				.executeTakeFirstOrThrow();
			expect(c.practice_name).toBe(practice.name);
		}
		expect(byDistrict.cells.length).toBeGreaterThan(0);
		for (const c of byDistrict.cells) {
			expect(keys(c)).toEqual([...measures, 'fy', 'district_id', 'district_code', 'district_name'].sort());
			expect(c).toMatchObject({ district_id: districtA, district_code: 'RTA', district_name: 'Rollup Test District A' });
		}
		for (const c of byHuc.cells) expect(keys(c)).toEqual([...measures, 'fy', 'huc8'].sort());
		// Cells come in key order: FY, then the grouping's place, then practice.
		const order = byCounty.cells.map((c) => `${c.fy}|${c.county_fips}|${c.practice_code}`);
		expect(order).toEqual([...order].sort());
	});
});

describe('reduction methods and the rollup', () => {
	it('a new active method changes the rollup; the old version still gives the old numbers; a record change then rebuilds the old one', async () => {
		const before = await rollup(`${CELL_QUERY}&basis=installed`);
		const altered: ReductionMethod = structuredClone(DEFAULT_METHOD);
		altered.version = 'rt-test.1';
		altered.label = 'Rollup test method (invented values for a test)';
		altered.practices.find((p) => p.practice_code === '605')!.n = {
			...altered.practices.find((p) => p.practice_code === '605')!.n!,
			mean: 0.5,
			sd: 0.1
		};
		altered.baseline.statewide = { ...altered.baseline.statewide, n_lb_per_ac_yr: 12 };
		await createMethod(db, altered, 'test');
		await setActiveMethod(db, 'rt-test.1', 'test');

		const building = await rollup(`${CELL_QUERY}&basis=installed`);
		expect(building.status).toBe(202);
		expect(building.headers['retry-after']).toBeDefined();
		expect(building.body.method_version).toBe('rt-test.1');
		expect(await rebuildMethod(db, 'rt-test.1')).toBe(true);

		const after = await rollup(`${CELL_QUERY}&basis=installed`);
		expect(after.status).toBe(200);
		expect(after.body.method_version).toBe('rt-test.1');
		expectCellMatches(after.body.groupings[0].cells[0], expectedCell(altered, 'installed'));
		expect(after.body.groupings[0].cells[0].n_lb_yr_mean).not.toBe(before.body.groupings[0].cells[0].n_lb_yr_mean);

		const old = await rollup(`${CELL_QUERY}&basis=installed&method=${original}`);
		expect(old.status).toBe(200);
		expect(old.body.method_version).toBe(original);
		expect(old.body.groupings).toEqual(before.body.groupings);

		// A change while rt-test.1 is active: the old version's summary is stale and is rebuilt on request.
		await updateRecords(db, [{ id: ids.A1, set: { drainage_area_acres: 55 } }]);
		const stale = await rollup(`${CELL_QUERY}&basis=installed&method=${original}`);
		expect(stale.status).toBe(202);
		await rebuildMethod(db, original);
		const rebuilt = await rollup(`${CELL_QUERY}&basis=installed&method=${original}`);
		expect(rebuilt.status).toBe(200);
		const m = (await getMethod(db, original))!.method;
		const e = expectedCell(m, 'installed');
		const a1 = 5 * m.baseline.statewide.n_lb_per_ac_yr; // 5 more acres under A1
		expectCellMatches(rebuilt.body.groupings[0].cells[0], {
			...e,
			acres: e.acres + 5,
			n: {
				mean: e.n.mean + a1 * eff(m, '605', 'n').mean,
				low: e.n.low + a1 * eff(m, '605', 'n').low,
				high: e.n.high + a1 * eff(m, '605', 'n').high
			}
		});
		// The active method followed the change incrementally.
		const live = await rollup(`${CELL_QUERY}&basis=installed`);
		expect(live.body.groupings[0].cells[0].credited_acres).toBe(175);
		await updateRecords(db, [{ id: ids.A1, set: { drainage_area_acres: 50 } }]);
		await setActiveMethod(db, original, 'test');
		await rebuildMethod(db, original);
	});

	it('an unknown method version is a 404 problem; a stored one never built answers 202 and asks for a build', async () => {
		const res = await rollup('method=no-such-method');
		expect(res.status).toBe(404);
		expect(res.headers['content-type']).toMatch(/problem\+json/);
		const m: ReductionMethod = { ...structuredClone(DEFAULT_METHOD), version: 'rt-pending.1', label: 'Rollup test, never built' };
		await createMethod(db, m, 'test');
		const p = await rollup('method=rt-pending.1');
		expect(p.status).toBe(202);
		expect(p.body).toMatchObject({ method_version: 'rt-pending.1', status: expect.stringMatching(/pending|running/) });
		const row = await db.selectFrom('rollup_refresh').selectAll().where('method_version', '=', 'rt-pending.1').executeTakeFirst();
		expect(row?.status).toMatch(/pending|running|ready/);
	});
});

describe('who sees what', () => {
	it('a district token sees its own district only, and is refused another', async () => {
		const own = await rollup('group=district,fy&fy=2024..2026', TOKEN_A);
		expect(own.status).toBe(200);
		expect(own.body.filters.district).toBe('RTA');
		expect(own.body.groupings[0].cells.length).toBeGreaterThan(0);
		expect(own.body.groupings[0].cells.every((c: { district_code: string }) => c.district_code === 'RTA')).toBe(true);
		const manager = await rollup('group=fy&fy=2024..2026&district=RTA');
		expect(own.body.groupings[0].totals).toEqual(manager.body.groupings[0].totals);
		const other = await rollup('district=RTB', TOKEN_A);
		expect(other.status).toBe(403);
		expect(other.headers['content-type']).toMatch(/problem\+json/);
		const b = await rollup('group=county,fy&fy=2025', TOKEN_B);
		expect(b.body.groupings[0].cells.map((c: { county_fips: string }) => c.county_fips)).toEqual(['19153']);
	});

	it('a token without rollups:read gets 403 insufficient_scope; no token gets 401', async () => {
		const res = await rollup('', TOKEN_NO_SCOPE);
		expect(res.status).toBe(403);
		expect(res.headers['www-authenticate']).toContain('insufficient_scope');
		const anon = await request(await appHandler()).get('/api/v1/rollups');
		expect(anon.status).toBe(401);
	});

	it('researchers get county × FY × practice only, without district fields', async () => {
		const res = await rollup('group=county,fy,practice&fy=2025', DEMO_TOKENS.researcher);
		expect(res.status).toBe(200);
		expect(res.body.small_cells).toMatchObject({ k: expect.any(Number) });
		for (const c of res.body.groupings[0].cells) {
			expect(Object.keys(c).some((k) => k.startsWith('district'))).toBe(false);
			expect(c.operations).toBeGreaterThanOrEqual(res.body.small_cells.k);
		}
		expect(res.body.groupings[0].totals.every((t: { operations: unknown }) => t.operations === null)).toBe(true);
		expect((await rollup('group=district', DEMO_TOKENS.researcher)).status).toBe(400);
		expect((await rollup('district=RTA', DEMO_TOKENS.researcher)).status).toBe(400);
	});
});

describe('query checking', () => {
	it.each([
		['group=county,huc8', '#/query/group'],
		['group=county,fy,farm', '#/query/group'],
		['fy=2027..2020', '#/query/fy'],
		['fy=27', '#/query/fy'],
		['basis=sometimes', '#/query/basis'],
		['fy_basis=calendar', '#/query/fy_basis'],
		['format=pdf', '#/query/format'],
		['county=191', '#/query/county'],
		['colour=blue', '#/query'],
		['group=county|fy&format=csv', '#/query/group'],
		['group=huc8&county=19169', '#/query/county'],
		['fy=2025&fy=2026', '#/query/fy']
	])('%s → 400 pointing at %s', async (q, pointer) => {
		const res = await rollup(q);
		expect(res.status).toBe(400);
		expect(res.headers['content-type']).toMatch(/problem\+json/);
		expect(res.body.errors.map((e: { pointer: string }) => e.pointer)).toContain(pointer);
	});

	it('an unknown district is 404', async () => {
		expect((await rollup('district=NOPE')).status).toBe(404);
	});
});

describe('exports', () => {
	it('CSV neutralises cells a spreadsheet would read as a formula', async () => {
		const names = ['=HYPERLINK("http://evil.example","x")', '+SUM(1,2)', '-2+3', '@cmd'];
		for (const [i, n] of names.entries()) {
			const id = await createDistrict(db, `RTINJ${i}`, n, 'Rollup Test Region', ['19169']);
			await insertRecords(db, id, [
				{
					local_id: `INJ${i}`,
					practice_code: '605',
					county_fips: '19169',
					installed_on: '2024-08-01',
					drainage_area_acres: 10,
					operation_id: 'x'
				}
			]);
		}
		const res = await request(await appHandler())
			.get('/api/v1/rollups?group=district,fy&fy=2025&format=csv')
			.set(bearer(DEMO_TOKENS.manager))
			.buffer(true)
			.parse((r, cb) => {
				let s = '';
				r.setEncoding('utf8');
				r.on('data', (c: string) => (s += c));
				r.on('end', () => cb(null, s));
			});
		expect(res.status).toBe(200);
		expect(res.headers['content-type']).toMatch(/^text\/csv/);
		expect(res.headers['content-disposition']).toMatch(/attachment; filename="runnel-rollups-.*\.csv"/);
		const rows = parse(res.body as string, { columns: true, bom: true }) as Record<string, string>[];
		const inj = rows.filter((r) => r['District code']?.startsWith('RTINJ'));
		expect(inj.map((r) => r.District).sort()).toEqual(names.map((n) => `'${n}`).sort());
		for (const r of rows) for (const v of Object.values(r)) expect(v).not.toMatch(/^[=+@]/);
		// Numbers stay numbers, and the totals row is there.
		expect(rows.some((r) => r.Row === 'total' && r.District === 'All')).toBe(true);
		expect(Number(inj[0]['Credited acres'])).toBe(10);
	});

	it('XLSX (streamed) reads back with exceljs: frozen header, number formats, a sheet per grouping, method and notes sheets, totals as in JSON', async () => {
		const q = 'group=county,fy,practice|fy&fy=2024..2026&district=RTA';
		const json = await rollup(q);
		const res = await request(await appHandler())
			.get(`/api/v1/rollups?${q}&format=xlsx`)
			.set(bearer(DEMO_TOKENS.manager))
			.buffer(true)
			.parse((r, cb) => {
				const chunks: Buffer[] = [];
				r.on('data', (c: Buffer) => chunks.push(c));
				r.on('end', () => cb(null, Buffer.concat(chunks)));
			});
		expect(res.status).toBe(200);
		expect(res.headers['content-type']).toBe('application/vnd.openxmlformats-officedocument.spreadsheetml.sheet');
		const wb = new ExcelJS.Workbook();
		await wb.xlsx.load(res.body as unknown as ArrayBuffer);
		expect(wb.worksheets.map((w) => w.name)).toEqual(['By FY, county, practice', 'By FY', 'Method and sources', 'Notes']);
		for (const [i, ws] of wb.worksheets.slice(0, 2).entries()) {
			expect(ws.views[0]).toMatchObject({ state: 'frozen', ySplit: 1 });
			const header = (ws.getRow(1).values as unknown[]).slice(1) as string[];
			const col = (name: string) => header.indexOf(name) + 1;
			const totals: Record<string, number>[] = [];
			ws.eachRow((row, n) => {
				if (n === 1 || row.getCell(col('Row')).value !== 'total') return;
				totals.push({
					fy: Number(row.getCell(col('FY')).value),
					practices: Number(row.getCell(col('Practices')).value),
					cost_usd: Number(row.getCell(col('Cost (USD)')).value),
					n_lb_yr_mean: Number(row.getCell(col('N reduction, lb/yr (mean)')).value),
					p_lb_yr_high: Number(row.getCell(col('P reduction, lb/yr (high)')).value)
				});
				expect(row.getCell(col('Cost (USD)')).numFmt).toBe('"$"#,##0.00');
				expect(row.getCell(col('N reduction, lb/yr (mean)')).numFmt).toBe('#,##0.0');
			});
			expect(totals).toEqual(
				json.body.groupings[i].totals.map((t: Record<string, number>) => ({
					fy: t.fy,
					practices: t.practices,
					cost_usd: t.cost_usd,
					n_lb_yr_mean: t.n_lb_yr_mean,
					p_lb_yr_high: t.p_lb_yr_high
				}))
			);
			expect(ws.getRow(2).getCell(col('Method version')).value).toBe(json.body.method_version);
		}
		const method = wb.getWorksheet('Method and sources')!;
		const texts: string[] = [];
		method.eachRow((row) =>
			texts.push((row.values as unknown[]).filter((v) => typeof v === 'string' || typeof v === 'number').join(' | '))
		);
		const m = (await getMethod(db, original))!.method;
		for (const p of m.practices) expect(texts.some((t) => t.startsWith(`Efficiency | ${p.practice_code} |`))).toBe(true);
		expect(texts.some((t) => t.startsWith('Baseline | Statewide') && t.includes(m.baseline.statewide.citation.title))).toBe(true);
		expect(texts.some((t) => t.includes('43'))).toBe(true);
		const notes: string[] = [];
		wb.getWorksheet('Notes')!.eachRow((row) => notes.push(String(row.getCell(1).value ?? '')));
		expect(notes.some((n) => n.includes('estimates'))).toBe(true);
	});
});
