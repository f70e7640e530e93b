// The server's small-cell decisions (per-cell aggregates and pooled statistics computed in PostgreSQL) are
// the same as the in-memory rule's (`decideCells` over one contribution per record) on the whole live
// dataset, over random scenarios (fast-check) with operations shared across the counties of one district,
// random acres (so the dominance share decides some cells) and random k. The rule itself and its source
// (Section 1619 of the Food, Conservation, and Energy Act of 2008, 7 U.S.C. 8791(b); k = 3 and 60 %
// dominance recalled from memory as common practice) are in src/lib/domain/anonymise.ts.
import fc from 'fast-check';
import { sql } from 'kysely';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decideCells, type CellDecision } from '$lib/domain/anonymise';
import { closeDb, getDb } from '$lib/server/db';
import { datasetContext } from '$lib/server/dataset/source';
import { getActiveMethodVersion } from '$lib/server/methods';
import { rebuildMethod } from '$lib/server/rollups/refresh';
import { createDistrict, insertRecords } from '../helpers/rollup-fixtures';
import { readSmallCellK, restoreSmallCellK, setSmallCellK } from '../helpers/small-cell-scenarios';

process.env.ROLLUP_POLL_MS = '3600000';
const db = getDb();
const districts: { id: number; county: string }[] = [];
let savedK: unknown;

beforeAll(async () => {
	await rebuildMethod(db, await getActiveMethodVersion(db));
	savedK = await readSmallCellK(db);
	const a = await createDistrict(db, 'DDEA', 'Decision check district A', 'DC North', ['19033', '19035']);
	const b = await createDistrict(db, 'DDEB', 'Decision check district B', 'DC North', ['19037']);
	const c = await createDistrict(db, 'DDEC', 'Decision check district C', 'DC South', ['19039', '19041']);
	// A county shared by districts of two regions (its cells take the first region by name, on both paths).
	const d = await createDistrict(db, 'DDED', 'Decision check district D', 'DC East', ['19037']);
	districts.push(
		{ id: a, county: '19033' },
		{ id: a, county: '19035' },
		{ id: b, county: '19037' },
		{ id: c, county: '19039' },
		{ id: c, county: '19041' },
		{ id: d, county: '19037' }
	);
}, 120_000);
afterAll(async () => {
	await restoreSmallCellK(db, savedK);
	await closeDb();
});

/** The in-memory rule over one contribution per record of the live dataset (the independent path). */
async function inMemory(version: string, k: number, dominance: number) {
	const rows = await sql<{
		county_fips: string;
		region: string;
		fy: number;
		practice_code: string;
		huc8: string | null;
		operation_key: string;
		acres: string;
	}>`
		select e.county_fips, d.region, e.state_fy_installed as fy, e.practice_code, e.huc8, e.operation_key, e.credited_acres::text as acres
		from record_estimates e join records r on r.id = e.record_id join districts d on d.id = e.district_id
		where e.method_version = ${version} and (r.status = 'installed' or e.state_fy_first is not null)`.execute(db);
	return decideCells(
		rows.rows.map((c) => ({
			method_version: version,
			county_fips: c.county_fips,
			region: c.region,
			state_fips: c.county_fips.slice(0, 2),
			fy_installed: c.fy,
			practice_code: c.practice_code,
			huc8: c.huc8,
			operation_key: c.operation_key,
			acres: Number(c.acres)
		})),
		{ k, dominance }
	);
}

const sorted = (m: Map<string, CellDecision>) => [...m.entries()].sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));

const scenario = fc.record({
	k: fc.integer({ min: 2, max: 5 }),
	records: fc.array(
		fc.record({
			where: fc.nat({ max: 5 }),
			practice_code: fc.constantFrom('605', '340'),
			fyOffset: fc.integer({ min: 0, max: 1 }),
			operation: fc.constantFrom('o1', 'o2', 'o3', 'o4', 'o5', null),
			acres: fc.integer({ min: 1, max: 300 })
		}),
		{ minLength: 1, maxLength: 30 }
	)
});

let run = 0;

describe('the decisions from SQL aggregates equal the in-memory rule', () => {
	it('over random scenarios', async () => {
		await fc.assert(
			fc.asyncProperty(scenario, async ({ k, records }) => {
				run++;
				const fy0 = 1800 + run * 3;
				await setSmallCellK(db, k);
				const byDistrict = new Map<number, Parameters<typeof insertRecords>[2]>();
				records.forEach((r, i) => {
					const { id, county } = districts[r.where];
					const fy = fy0 + r.fyOffset;
					const list = byDistrict.get(id) ?? [];
					list.push({
						local_id: `DD${run}-${i}`,
						practice_code: r.practice_code,
						county_fips: county,
						installed_on: `${fy - 1}-09-15`,
						extent_acres: r.practice_code === '340' ? r.acres : null,
						drainage_area_acres: r.practice_code === '605' ? r.acres : null,
						operation_id: r.operation
					});
					byDistrict.set(id, list);
				});
				for (const [d, list] of byDistrict) await insertRecords(db, d, list);

				const ctx = await datasetContext(db);
				expect(ctx.k).toBe(k);
				const truth = await inMemory(ctx.methodVersion, ctx.k, ctx.dominance);
				expect(ctx.counts).toEqual(truth.counts);
				expect(sorted(ctx.decisions)).toEqual(sorted(truth.decisions));
			}),
			{ numRuns: 12 }
		);
	}, 300_000);
});
