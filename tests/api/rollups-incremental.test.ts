// The summary maintained incrementally (each write recomputes only the cells it touches) equals a full
// rebuild from all records, after any sequence of inserts, updates and withdrawals — including moves
// between fields (stacking), counties and practices, and changed install dates (fast-check).
import fc from 'fast-check';
import { sql } from 'kysely';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, getDb } from '$lib/server/db';
import { getActiveMethodVersion } from '$lib/server/methods';
import { CHUNK, rebuildDistricts, rebuildMethod } from '$lib/server/rollups/refresh';
import { createDistrict, insertRecords, updateRecords, type TestRecord } from '../helpers/rollup-fixtures';

const db = getDb();
let method = '';

beforeAll(async () => {
	method = await getActiveMethodVersion(db);
	await rebuildMethod(db, method);
});
afterAll(() => closeDb());

const COUNTIES = ['19001', '19003', '19005'];
const arbRecord = fc.record({
	practice_code: fc.constantFrom('605', '340', '554', '604', '656', '590'),
	county_fips: fc.constantFrom(...COUNTIES),
	installed_on: fc
		.date({ min: new Date('2016-01-01'), max: new Date('2027-12-31'), noInvalidDate: true })
		.map((d) => d.toISOString().slice(0, 10)),
	acres: fc.integer({ min: 0, max: 400 }),
	field_id: fc.option(fc.constantFrom('F1', 'F2', 'F3'), { nil: null }),
	operation_id: fc.option(fc.constantFrom('op-a', 'op-b', 'op-c', 'op-d'), { nil: null }),
	huc12: fc.option(fc.constantFrom('070801050101', '070801050202', '071000060303'), { nil: null }),
	cost: fc.option(
		fc.integer({ min: 0, max: 5_000_000 }).map((c) => c / 100),
		{ nil: null }
	)
});

const command = fc.oneof(
	fc.record({ kind: fc.constant('insert' as const), records: fc.array(arbRecord, { minLength: 1, maxLength: 4 }) }),
	fc.record({ kind: fc.constant('update' as const), pick: fc.nat(), change: arbRecord }),
	fc.record({ kind: fc.constant('move' as const), pick: fc.nat(), field_id: fc.option(fc.constantFrom('F1', 'F2', 'F3'), { nil: null }) }),
	// Several changes in one transaction (as a batch writes them), the same record possibly twice.
	fc.record({
		kind: fc.constant('many' as const),
		changes: fc.array(fc.record({ pick: fc.nat(), change: arbRecord }), { minLength: 2, maxLength: 5 })
	}),
	// A new version with the same values: the summary must not move.
	fc.record({ kind: fc.constant('same' as const), pick: fc.nat() }),
	fc.record({
		kind: fc.constant('withdraw' as const),
		pick: fc.nat(),
		on: fc.date({ min: new Date('2015-06-01'), max: new Date('2028-06-30'), noInvalidDate: true }).map((d) => d.toISOString().slice(0, 10))
	})
);

type ArbRecord = typeof arbRecord extends fc.Arbitrary<infer T> ? T : never;

/** A record's inputs: what arbRecord makes, with any field, operation or HUC-12. */
type RecordInput = Omit<ArbRecord, 'field_id' | 'operation_id' | 'huc12'> & {
	field_id: string | null;
	operation_id: string | null;
	huc12: string | null;
};

function toRecord(localId: string, r: RecordInput): TestRecord {
	const edge = ['554', '604', '605', '656'].includes(r.practice_code);
	return {
		local_id: localId,
		practice_code: r.practice_code,
		county_fips: r.county_fips,
		installed_on: r.installed_on,
		extent_acres: edge ? null : r.acres,
		drainage_area_acres: edge ? r.acres : null,
		field_id: r.field_id,
		operation_id: r.operation_id,
		huc12: r.huc12,
		cost_total_usd: r.cost,
		cost_share_usd: r.cost === null ? null : Math.round(r.cost * 50) / 100
	};
}

/** One bioreactor on its own (no field, no HUC), for the tests that tamper with a district's cells. */
const oneBioreactor: ArbRecord = {
	practice_code: '605',
	county_fips: '19001',
	installed_on: '2024-09-01',
	acres: 50,
	field_id: null,
	operation_id: 'op-a',
	huc12: null,
	cost: 100
};

async function snapshot(districtId: number) {
	const cells = await sql`select * from rollup_cells where method_version = ${method} and district_id = ${districtId}
		order by fy_basis, basis, geo_level, fy, geo, practice_code`.execute(db);
	const estimates =
		await sql`select record_id, counted, reason, credited_acres, n_lb_mean, n_lb_low, n_lb_high, p_lb_mean, p_lb_low, p_lb_high,
			county_fips, huc8, practice_code, field_id, operation_key, cost_usd, cost_share_usd, state_fy_installed, state_fy_first, state_fy_last,
			federal_fy_installed, federal_fy_first, federal_fy_last
		from record_estimates where method_version = ${method} and district_id = ${districtId} order by record_id`.execute(db);
	return { cells: cells.rows, estimates: estimates.rows };
}

let run = 0;

describe('incremental maintenance = full rebuild', () => {
	it('after a random sequence of inserts, updates, field moves and withdrawals', async () => {
		await fc.assert(
			fc.asyncProperty(fc.array(command, { minLength: 1, maxLength: 14 }), async (commands) => {
				run++;
				const districtId = await createDistrict(db, `RTP${run}`, `Rollup property district ${run}`, 'Rollup Test Region', COUNTIES);
				const ids: string[] = [];
				let n = 0;
				for (const c of commands) {
					if (c.kind === 'insert') {
						ids.push(
							...(await insertRecords(
								db,
								districtId,
								c.records.map((r) => toRecord(`P${run}-${n++}`, r))
							))
						);
					} else if (ids.length > 0) {
						const id = ids[('pick' in c ? c.pick : 0) % ids.length];
						if (c.kind === 'update') {
							const { local_id: _ignored, ...set } = toRecord('x', c.change);
							await updateRecords(db, [{ id, set }]);
						} else if (c.kind === 'many') {
							await updateRecords(
								db,
								c.changes.map((x) => {
									const { local_id: _ignored, ...set } = toRecord('x', x.change);
									return { id: ids[x.pick % ids.length], set };
								})
							);
						} else if (c.kind === 'same') await updateRecords(db, [{ id, set: {} }]);
						else if (c.kind === 'move') await updateRecords(db, [{ id, set: { field_id: c.field_id } }]);
						else await updateRecords(db, [{ id, set: { status: 'withdrawn', withdrawn_on: c.on } }]);
					}
				}
				const incremental = await snapshot(districtId);
				expect(incremental.estimates.length).toBe(ids.length);
				// A full rebuild works district by district; rebuilding this one district is what it does here
				// (the whole-method rebuild is run once in beforeAll and covered by the rollups API tests).
				await rebuildDistricts(db, method, [districtId]);
				const full = await snapshot(districtId);
				expect(incremental.estimates).toEqual(full.estimates);
				expect(incremental.cells).toEqual(full.cells);
			}),
			{ numRuns: 16 }
		);
		// Sixteen random histories of up to fourteen transactions each: minutes on a machine busy with other suites.
	}, 300_000);

	it('a change larger than one write chunk: estimates written in several statements, operations read between them', async () => {
		const districtId = await createDistrict(db, 'RTC', 'Rollup chunked district', 'Rollup Test Region', COUNTIES);
		// The second insert alone is more estimates than one statement writes.
		const [firstCount, secondCount] = [1200, CHUNK + 300];
		const practices = ['605', '340', '554', '604', '656', '590'] as const;
		const many = (from: number, count: number, ops: number) =>
			Array.from({ length: count }, (_, i) =>
				toRecord(`C${from + i}`, {
					practice_code: practices[(from + i) % practices.length],
					county_fips: COUNTIES[(from + i) % COUNTIES.length],
					installed_on: `${2016 + ((from + i) % 11)}-0${1 + ((from + i) % 9)}-15`,
					acres: 5 + (((from + i) * 7) % 300),
					field_id: (from + i) % 3 === 0 ? `F${Math.floor((from + i) / 3) % 500}` : null,
					operation_id: `op-${(from + i) % ops}`,
					huc12: (from + i) % 4 === 0 ? null : '070801050101',
					cost: ((from + i) % 50) * 10.25
				})
			);
		// Some records first, then many more (new operations and old ones, fields shared with the first), then moves.
		const ids = await insertRecords(db, districtId, many(0, firstCount, 300));
		await insertRecords(db, districtId, many(firstCount, secondCount, 350));
		await updateRecords(
			db,
			ids
				.slice(0, 40)
				.map((id, i) => ({ id, set: { operation_id: `op-moved-${i % 7}`, county_fips: COUNTIES[(i + 1) % COUNTIES.length] } }))
		);
		const incremental = await snapshot(districtId);
		expect(incremental.estimates.length).toBe(firstCount + secondCount);
		await rebuildDistricts(db, method, [districtId]);
		expect(incremental).toEqual(await snapshot(districtId));
	}, 120_000);

	it('a stored summary that disagrees with the stored estimates is recomputed, not patched, on the next change', async () => {
		const districtId = await createDistrict(db, 'RTF', 'Rollup fallback district', 'Rollup Test Region', COUNTIES);
		const base: Omit<ArbRecord, 'operation_id' | 'practice_code'> = {
			county_fips: '19001',
			installed_on: '2024-09-01',
			acres: 50,
			field_id: 'F1',
			huc12: null,
			cost: 100
		};
		const ids = await insertRecords(db, districtId, [
			toRecord('F1', { ...base, practice_code: '605', operation_id: 'op-a' }),
			toRecord('F2', { ...base, practice_code: '340' as const, operation_id: 'op-b' })
		]);
		// Cells lost behind the writers' back (say, a hand-edited table): adding deltas to them would be wrong.
		await sql`delete from rollup_cells where method_version = ${method} and district_id = ${districtId} and fy_basis = 'state'`.execute(db);
		await updateRecords(db, [{ id: ids[0], set: { drainage_area_acres: 80 } }]);
		const afterChange = await snapshot(districtId);
		await rebuildDistricts(db, method, [districtId]);
		const full = await snapshot(districtId);
		// Every key the change touched was recomputed from the stored estimates: those cells equal a rebuild's.
		const touched = (c: unknown) =>
			(c as Record<string, unknown>).fy_basis === 'federal' || Number((c as Record<string, unknown>).fy) >= 2025;
		expect(afterChange.cells.filter(touched)).toEqual(full.cells.filter(touched));
		expect(afterChange.cells.filter((c) => (c as Record<string, unknown>).fy_basis === 'state').length).toBeGreaterThan(0);
	});

	it('a stored cell whose counts cannot be right after the deltas is recomputed too', async () => {
		const districtId = await createDistrict(db, 'RTG', 'Rollup bad-count district', 'Rollup Test Region', COUNTIES);
		const [id] = await insertRecords(db, districtId, [toRecord('G1', oneBioreactor)]);
		// Hand-edited cells: practices but no operations. A change of acres moves neither count, so patching
		// would keep the impossible pair; the refresh must see it and recompute.
		await sql`update rollup_cells set operations = 0 where method_version = ${method} and district_id = ${districtId}`.execute(db);
		await updateRecords(db, [{ id, set: { drainage_area_acres: 80 } }]);
		const afterChange = await snapshot(districtId);
		await rebuildDistricts(db, method, [districtId]);
		expect(afterChange).toEqual(await snapshot(districtId));
	});

	it('the summary is never read from the records: cells stay as stored when records change behind the hook', async () => {
		const districtId = await createDistrict(db, 'RTQ', 'Rollup direct-write district', 'Rollup Test Region', COUNTIES);
		const [id] = await insertRecords(db, districtId, [toRecord('Q1', oneBioreactor)]);
		const before = await snapshot(districtId);
		// A write that skips the hook (not how the app writes): the summary does not move until a rebuild.
		await db.updateTable('records').set({ drainage_area_acres: 500 }).where('id', '=', id).execute();
		expect(await snapshot(districtId)).toEqual(before);
		await rebuildDistricts(db, method, [districtId]);
		expect(await snapshot(districtId)).not.toEqual(before);
	});
});
