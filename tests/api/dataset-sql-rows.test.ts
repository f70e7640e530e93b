// The published rows PostgreSQL computes (src/lib/server/dataset/source.ts: the small-cell decisions, the
// pseudonym as sha256(opad || sha256(ipad || id)), rounded acres and estimates, funding categories) equal
// what the specification in src/lib/domain/anonymise.ts (`toRow`, with Node's HMAC-SHA-256) gives for the
// same records — value for value, and byte for byte as CSV (the live COPY stream against the release
// encoder) — over random records whose acres sit on the rounding edges (halves, 100 acres, fifths).
// HMAC: RFC 2104, "HMAC: Keyed-Hashing for Message Authentication", IETF, 1997, section 2.
import fc from 'fast-check';
import { sql } from 'kysely';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { baseCellKey, publishedCellKey, toRow, type DatasetRow, type SourceRecord } from '$lib/domain/anonymise';
import { closeDb, getDb } from '$lib/server/db';
import { csvHeader, csvLines } from '$lib/server/dataset/encode';
import { pseudonymiser } from '$lib/server/dataset/pseudonym';
import {
	datasetContext,
	datasetCsvStream,
	datasetRows,
	fillPids,
	kyselyExec,
	prepare,
	type DatasetFilter
} from '$lib/server/dataset/source';
import { getActiveMethodVersion } from '$lib/server/methods';
import { afterRecordsChanged } from '$lib/server/records/changes';
import { rebuildMethod } from '$lib/server/rollups/refresh';
import { createDistrict, insertRecords } from '../helpers/rollup-fixtures';

process.env.ROLLUP_POLL_MS = '3600000';
const db = getDb();
const places: { id: number; county: string }[] = [];

beforeAll(async () => {
	await rebuildMethod(db, await getActiveMethodVersion(db));
	const a = await createDistrict(db, 'DSQA', 'SQL rows district A', 'SQL North', ['19043', '19045']);
	const b = await createDistrict(db, 'DSQB', 'SQL rows district B', 'SQL South', ['19047']);
	// A county two districts of different regions share: its cells have one region (the first by name).
	const c = await createDistrict(db, 'DSQC', 'SQL rows district C', 'SQL East', ['19047']);
	places.push({ id: a, county: '19043' }, { id: a, county: '19045' }, { id: b, county: '19047' }, { id: c, county: '19047' });
}, 120_000);
afterAll(() => closeDb());

/** The specification's rows for the whole dataset, in record order, from the source columns. */
async function expectedRows(filter: DatasetFilter = {}): Promise<DatasetRow[]> {
	const ctx = await datasetContext(db);
	const pseudonym = await pseudonymiser(db);
	const src = await sql<{
		record_id: string;
		practice_code: string;
		practice_name: string;
		county_fips: string;
		huc8: string | null;
		installed_on: string;
		fy_installed: number;
		fy_first: number | null;
		fy_last: number | null;
		credited_acres: string | null;
		n_lb_mean: string;
		n_lb_low: string;
		n_lb_high: string;
		p_lb_mean: string;
		p_lb_low: string;
		p_lb_high: string;
		funding_program: string | null;
	}>`
		select e.record_id::text as record_id, e.practice_code, p.name as practice_name, e.county_fips, e.huc8, r.installed_on,
			e.state_fy_installed as fy_installed, e.state_fy_first as fy_first, e.state_fy_last as fy_last, e.credited_acres,
			e.n_lb_mean, e.n_lb_low, e.n_lb_high, e.p_lb_mean, e.p_lb_low, e.p_lb_high, r.funding_program
		from record_estimates e join records r on r.id = e.record_id join practices p on p.code = e.practice_code
		where e.method_version = ${ctx.methodVersion} and (r.status = 'installed' or e.state_fy_first is not null)
		order by e.record_id`.execute(db);
	const rows: DatasetRow[] = [];
	for (const s of src.rows) {
		const rec: SourceRecord = {
			record_id: s.record_id,
			practice_code: s.practice_code,
			practice_name: s.practice_name,
			county_fips: s.county_fips,
			region: '(the decision names the region)',
			state_fips: s.county_fips.slice(0, 2),
			huc12: s.huc8 ? `${s.huc8}0000` : null,
			installed_on: s.installed_on,
			fy_installed: s.fy_installed,
			fy_first: s.fy_first,
			fy_last: s.fy_last,
			credited_acres: s.credited_acres == null ? null : Number(s.credited_acres),
			n_lb_mean: Number(s.n_lb_mean),
			n_lb_low: Number(s.n_lb_low),
			n_lb_high: Number(s.n_lb_high),
			p_lb_mean: Number(s.p_lb_mean),
			p_lb_low: Number(s.p_lb_low),
			p_lb_high: Number(s.p_lb_high),
			method_version: ctx.methodVersion,
			funding_program: s.funding_program,
			operation_key: ''
		};
		if (filter.practice && rec.practice_code !== filter.practice) continue;
		if (filter.fy != null && !(rec.fy_first != null && rec.fy_first <= (filter.fyTo ?? filter.fy) && rec.fy_last! >= filter.fy)) continue;
		const d = ctx.decisions.get(baseCellKey(rec));
		if (!d) continue;
		if (filter.county && (d.level !== 'county' || rec.county_fips !== filter.county)) continue;
		rows.push(toRow(rec, d, pseudonym));
	}
	return rows;
}

async function sqlRows(filter: DatasetFilter = {}): Promise<DatasetRow[]> {
	const ctx = await datasetContext(db);
	return db.transaction().execute(async (trx) => {
		await prepare(kyselyExec(trx), ctx);
		const out: DatasetRow[] = [];
		for await (const r of datasetRows(kyselyExec(trx), ctx, filter, 250)) out.push(r);
		return out;
	});
}

async function liveCsv(filter: DatasetFilter = {}): Promise<string> {
	const stream = await datasetCsvStream(await datasetContext(db), filter);
	return new Response(stream).text();
}

/** Every published area × FY × practice group has at least k distinct operations (the rule's floor). */
async function expectEveryCellHasK(rows: DatasetRow[]): Promise<void> {
	const ctx = await datasetContext(db);
	const pseudonym = await pseudonymiser(db);
	const ops = await sql<{ id: string; op: string }>`
		select record_id::text as id, operation_key as op from record_estimates where method_version = ${ctx.methodVersion}`.execute(db);
	const opOfPid = new Map(ops.rows.map((r) => [pseudonym(r.id), r.op]));
	const groups = new Map<string, Set<string>>();
	for (const r of rows) {
		const key = publishedCellKey(r);
		if (!groups.has(key)) groups.set(key, new Set());
		groups.get(key)!.add(opOfPid.get(r.pid)!);
	}
	for (const [key, set] of groups) expect({ key, operations: set.size >= ctx.k }).toEqual({ key, operations: true });
}

const acres = fc.oneof(
	fc.integer({ min: 1, max: 400 }).map((n) => n + 0.5),
	fc.integer({ min: 0, max: 3000 }).map((n) => n / 100),
	fc.constantFrom(99.49, 99.5, 100, 102.5, 107.5, 112.49, 0.5, 1.5),
	fc.integer({ min: 20, max: 200 }).map((n) => n * 5 + 2.5)
);
const funding = fc.constantFrom(
	null,
	'',
	'  ',
	'State cost-share',
	'EQIP',
	'County watershed fund + EQIP',
	'Landowner',
	'Private "foundation", round 2',
	'something else'
);

let run = 0;

describe('the published rows PostgreSQL computes equal the specification', () => {
	it('value for value and byte for byte, over random records', async () => {
		await fc.assert(
			fc.asyncProperty(
				fc.array(
					fc.record({
						where: fc.nat({ max: 3 }),
						practice_code: fc.constantFrom('605', '340', '393'),
						month: fc.integer({ min: 1, max: 12 }),
						year: fc.integer({ min: 2016, max: 2025 }),
						operation: fc.constantFrom('o1', 'o2', 'o3', 'o4', null),
						acres,
						funding,
						huc: fc.constantFrom(null, '070801050101', '070801060202')
					}),
					{ minLength: 1, maxLength: 25 }
				),
				async (records) => {
					run++;
					for (const [i, p] of places.entries()) {
						const mine = records.filter((r) => r.where === i);
						await insertRecords(
							db,
							p.id,
							mine.map((r, j) => ({
								local_id: `SQ${run}-${i}-${j}`,
								practice_code: r.practice_code,
								county_fips: p.county,
								installed_on: `${r.year}-${String(r.month).padStart(2, '0')}-15`,
								extent_acres: r.practice_code === '605' ? null : r.acres,
								drainage_area_acres: r.practice_code === '605' ? r.acres : null,
								operation_id: r.operation,
								huc12: r.huc,
								funding_program: r.funding
							}))
						);
					}
					const expected = await expectedRows();
					expect(expected.length).toBeGreaterThan(0);
					// Some rows without their stored pid (as rows written by other means are until the next fill):
					// the query computes those.
					await sql`update record_estimates set pub_pid = null where record_id % 2 = 0 and district_id = any(${places.map((p) => p.id)}::int[])`.execute(
						db
					);
					expect(await sqlRows()).toEqual(expected);
					expect(await liveCsv()).toBe(csvHeader() + csvLines(expected));
					await expectEveryCellHasK(expected);
				}
			),
			{ numRuns: 6 }
		);
	}, 300_000);

	it('with each filter', async () => {
		const ctx = await datasetContext(db);
		const someCounty = [...ctx.decisions.entries()].find(([, d]) => d?.level === 'county')?.[0].split('|')[1] ?? '19043';
		for (const filter of [{ practice: '605' }, { fy: 2020 }, { fy: 2018, fyTo: 2021 }, { county: someCounty }] as DatasetFilter[]) {
			const expected = await expectedRows(filter);
			expect(await sqlRows(filter)).toEqual(expected);
			expect(await liveCsv(filter)).toBe(csvHeader() + csvLines(expected));
		}
	}, 120_000);

	it('the stored per-record values follow the record: a change, a withdrawal, a missing pid, a new pseudonym key', async () => {
		const version = await getActiveMethodVersion(db);
		const pseudonym = await pseudonymiser(db);
		const [id] = await insertRecords(db, places[0].id, [
			{
				local_id: 'SQX-1',
				practice_code: '340',
				county_fips: places[0].county,
				installed_on: '2019-03-15',
				extent_acres: 42.5,
				operation_id: 'o1',
				funding_program: 'EQIP'
			}
		]);
		const stored = () =>
			db
				.selectFrom('record_estimates')
				.select(['pub_pid', 'pub_install_year', 'pub_install_month', 'pub_funding_program', 'pub_included', 'pub_acres'])
				.where('record_id', '=', id)
				.where('method_version', '=', version)
				.executeTakeFirstOrThrow();
		// Written by the rollup service with its pid (the transaction carries the pseudonym key).
		expect(await stored()).toEqual({
			pub_pid: pseudonym(id),
			pub_install_year: 2019,
			pub_install_month: 3,
			pub_funding_program: 'EQIP',
			pub_included: true,
			pub_acres: 43
		});
		const change = (
			set: Partial<{ installed_on: string; funding_program: string; extent_acres: number; status: 'withdrawn'; withdrawn_on: string }>
		) =>
			db.transaction().execute(async (trx) => {
				await trx.updateTable('records').set(set).where('id', '=', id).execute();
				await afterRecordsChanged(trx, [id]);
			});
		await change({ installed_on: '2020-11-02', funding_program: 'State cost-share', extent_acres: 142 });
		expect(await stored()).toMatchObject({
			pub_install_year: 2020,
			pub_install_month: 11,
			pub_funding_program: 'State cost-share',
			pub_acres: 140
		});
		// Withdrawn before the FY of its installation began: never in service, no longer part of the dataset.
		await change({ status: 'withdrawn', withdrawn_on: '2020-06-30' });
		expect(await stored()).toMatchObject({ pub_included: false, pub_pid: pseudonym(id) });

		// A row without its pid gets it at the next fill; a changed pseudonym key remakes every stored pid.
		await sql`update record_estimates set pub_pid = null where record_id = ${id}`.execute(db);
		await fillPids(db);
		expect((await stored()).pub_pid).toBe(pseudonym(id));
		await sql`update record_estimates set pub_pid = 'made under another key' where record_id = ${id}`.execute(db);
		await db
			.updateTable('settings')
			.set({ value: JSON.stringify('another key') })
			.where('key', '=', 'dataset_pid_fingerprint')
			.execute();
		await fillPids(db);
		expect((await stored()).pub_pid).toBe(pseudonym(id));
		const missing = await sql<{ n: number }>`select count(*)::int as n from record_estimates where pub_pid is null`.execute(db);
		expect(missing.rows[0].n).toBe(0);

		// Across this file's districts, every stored value agrees with its record.
		const disagree = await sql<{ n: number }>`
			select count(*)::int as n from record_estimates e join records r on r.id = e.record_id
			where e.district_id = any(${places.map((p) => p.id)}::int[]) and (
				e.pub_included is distinct from (r.status = 'installed' or e.state_fy_first is not null)
				or e.pub_install_year is distinct from date_part('year', r.installed_on)::int
				or e.pub_install_month is distinct from date_part('month', r.installed_on)::int
				or e.pub_funding_program is distinct from r.funding_program)`.execute(db);
		expect(disagree.rows[0].n).toBe(0);
	}, 120_000);
});
