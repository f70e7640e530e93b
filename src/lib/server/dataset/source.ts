// Reading the research dataset from the database: per-cell aggregates for the small-cell rule (computed in
// SQL, a few thousand rows), then the records themselves in keyset batches so no export holds the whole result.
// Source: record_estimates under the active reduction method (state fiscal years), the record's install
// date and funding program, the district's region and the practice name. Records count when installed
// (not withdrawn) or when they were in service in some fiscal year.
import { sql, type Kysely } from 'kysely';
import {
	baseCellKey,
	decideCellAggregates,
	huc8Of,
	toRow,
	type AnonymiseCounts,
	type CellAggregate,
	type CellDecision,
	type CellPool,
	type DatasetRow,
	type OpStats,
	type SourceRecord
} from '../../domain/anonymise';
import type { Database } from '../db/schema';
import { getActiveMethodVersion } from '../methods';
import { readSettings, SETTING_KEYS, smallCellKOf } from '../rollups/settings';
import { pseudonymiser } from './pseudonym';

export const DOMINANCE_SETTING = 'dataset_dominance_share';

export interface DatasetFilter {
	/** In service during this state fiscal year (or, with `fyTo`, during any FY from `fy` to `fyTo`). */
	fy?: number | null;
	fyTo?: number | null;
	practice?: string | null;
	/** Published county (rows generalised above county never match). */
	county?: string | null;
}

export interface DatasetContext {
	methodVersion: string;
	k: number;
	dominance: number;
	decisions: Map<string, CellDecision>;
	counts: AnonymiseCounts;
	pseudonym: (id: string) => string;
}

const INCLUDED = sql`(r.status = 'installed' or e.state_fy_first is not null)`;

async function rules(db: Kysely<Database>): Promise<{ k: number; dominance: number }> {
	const s = await readSettings(db, [SETTING_KEYS.smallCellK, DOMINANCE_SETTING]);
	const d = Number(s.get(DOMINANCE_SETTING));
	return { k: smallCellKOf(s.get(SETTING_KEYS.smallCellK)), dominance: d > 0 && d <= 1 ? d : 0.6 };
}

interface StatsRow {
	operations: number;
	acres: string;
	top_acres: string;
}

const opStats = (r: StatsRow): OpStats => ({ operations: r.operations, acres: Number(r.acres), top_acres: Number(r.top_acres) });

/**
 * Per-cell aggregates for the small-cell rule, computed in PostgreSQL: one row per county × FY × practice ×
 * HUC-8 group and one per cell, never one per record or operation. An operation's acres in a cell (or a HUC-8
 * group) are its records' credited acres summed (never below 0).
 */
async function cellAggregates(db: Kysely<Database>, version: string): Promise<CellAggregate[]> {
	const res = await sql<
		StatsRow & {
			county_fips: string;
			fy: number;
			practice_code: string;
			huc8: string | null;
			is_cell: boolean;
			region: string;
			records: number;
		}
	>`
		with ops as (
			select e.county_fips, e.state_fy_installed as fy, e.practice_code, coalesce(e.huc8, '') as huc8, e.operation_key,
				min(d.region) as region, greatest(sum(e.credited_acres), 0) as acres, count(*)::int as records
			from record_estimates e join records r on r.id = e.record_id join districts d on d.id = e.district_id
			where e.method_version = ${version} and ${INCLUDED}
			group by 1, 2, 3, 4, 5
		), cell_ops as (
			select county_fips, fy, practice_code, operation_key, min(region) as region, sum(acres) as acres, sum(records) as records
			from ops group by 1, 2, 3, 4
		)
		select county_fips, fy, practice_code, null as huc8, true as is_cell, min(region) as region, sum(records)::int as records,
			count(*)::int as operations, sum(acres)::text as acres, max(acres)::text as top_acres
		from cell_ops group by 1, 2, 3
		union all
		select county_fips, fy, practice_code, huc8, false, '', 0, count(*)::int, sum(acres)::text, max(acres)::text
		from ops group by 1, 2, 3, 4
		order by 1, 2, 3, 5 desc`.execute(db);
	const cells: CellAggregate[] = [];
	let groups: OpStats[] = [];
	for (const r of res.rows) {
		if (r.is_cell) {
			groups = [];
			cells.push({
				method_version: version,
				county_fips: r.county_fips,
				region: r.region,
				state_fips: r.county_fips.slice(0, 2),
				fy_installed: r.fy,
				practice_code: r.practice_code,
				records: r.records,
				...opStats(r),
				huc8_groups: groups
			});
		} else groups.push(opStats(r));
	}
	return cells;
}

/** The rule's pool questions answered in PostgreSQL: the union of the member cells' operations per pool. */
async function poolStats(db: Kysely<Database>, version: string, pools: readonly CellPool[]): Promise<Map<string, OpStats>> {
	const county: string[] = [];
	const fy: number[] = [];
	const practice: string[] = [];
	const key: string[] = [];
	for (const p of pools) {
		for (const c of p.cells) {
			county.push(c.county_fips);
			fy.push(c.fy_installed);
			practice.push(c.practice_code);
			key.push(p.key);
		}
	}
	const res = await sql<StatsRow & { pool: string }>`
		with members as (
			select * from unnest(${county}::text[], ${fy}::int[], ${practice}::text[], ${key}::text[]) as m(county_fips, fy, practice_code, pool)
		), ops as (
			select m.pool, e.operation_key, greatest(sum(e.credited_acres), 0) as acres
			from record_estimates e join records r on r.id = e.record_id
				join members m on m.county_fips = e.county_fips and m.fy = e.state_fy_installed and m.practice_code = e.practice_code
			where e.method_version = ${version} and ${INCLUDED}
			group by m.pool, e.county_fips, e.state_fy_installed, e.practice_code, coalesce(e.huc8, ''), e.operation_key
		)
		select pool, count(*)::int as operations, sum(acres)::text as acres, max(acres)::text as top_acres
		from (select pool, operation_key, sum(acres) as acres from ops group by 1, 2) as pool_ops
		group by pool`.execute(db);
	return new Map(res.rows.map((r) => [r.pool, opStats(r)]));
}

let cache: { stamp: string; ctx: DatasetContext } | null = null;

/** The cell decisions for the whole dataset (never for a filtered part), cached until the estimates change. */
export async function datasetContext(db: Kysely<Database>, methodVersion?: string): Promise<DatasetContext> {
	const version = methodVersion ?? (await getActiveMethodVersion(db));
	const { k, dominance } = await rules(db);
	const stampRow = await sql<{ stamp: string }>`
		select coalesce(max(computed_at)::text, '') || '/' || count(*)::text as stamp
		from record_estimates where method_version = ${version}`.execute(db);
	const stamp = `${version}|${k}|${dominance}|${stampRow.rows[0]?.stamp}`;
	if (cache?.stamp === stamp) return cache.ctx;
	const steps = decideCellAggregates(await cellAggregates(db, version), { k, dominance });
	let step = steps.next();
	while (!step.done) step = steps.next(await poolStats(db, version, step.value));
	const { decisions, counts } = step.value;
	const ctx: DatasetContext = { methodVersion: version, k, dominance, decisions, counts, pseudonym: await pseudonymiser(db) };
	cache = { stamp, ctx };
	return ctx;
}

interface SourceRow {
	record_id: string;
	/** Installed, or in service in some FY (else not part of the dataset). */
	included: boolean;
	practice_code: string;
	practice_name: string;
	county_fips: string;
	region: string;
	huc8: string | null;
	installed_on: string;
	fy_installed: number;
	fy_first: number | null;
	fy_last: number | null;
	credited_acres: string;
	n_lb_mean: string;
	n_lb_low: string;
	n_lb_high: string;
	p_lb_mean: string;
	p_lb_low: string;
	p_lb_high: string;
	funding_program: string | null;
}

/**
 * One batch of source rows after `afterId` (record id order), filtered. The batch is cut from
 * record_estimates by its (method_version, record_id) index first, so each batch costs the same however far
 * into the dataset it is; rows that are not part of the dataset come back with `included = false` (the
 * caller skips them but keeps their id as the position).
 */
export async function sourceBatch(
	db: Kysely<Database>,
	ctx: DatasetContext,
	filter: DatasetFilter,
	afterId: string | null,
	limit: number
): Promise<SourceRow[]> {
	const where = [sql`method_version = ${ctx.methodVersion}`];
	if (afterId) where.push(sql`record_id > ${afterId}::bigint`);
	if (filter.practice) where.push(sql`practice_code = ${filter.practice}`);
	if (filter.county) where.push(sql`county_fips = ${filter.county}`);
	if (filter.fy != null) where.push(sql`state_fy_first <= ${filter.fyTo ?? filter.fy} and state_fy_last >= ${filter.fy}`);
	const res = await sql<SourceRow>`
		select e.record_id::text as record_id, ${INCLUDED} as included, e.practice_code, p.name as practice_name, e.county_fips,
			d.region, e.huc8, r.installed_on, e.state_fy_installed as fy_installed, e.state_fy_first as fy_first,
			e.state_fy_last as fy_last, e.credited_acres, e.n_lb_mean, e.n_lb_low, e.n_lb_high, e.p_lb_mean, e.p_lb_low, e.p_lb_high,
			r.funding_program
		from (
			select * from record_estimates where ${sql.join(where, sql` and `)} order by record_id limit ${limit}
		) as e
			join records r on r.id = e.record_id
			join districts d on d.id = e.district_id
			join practices p on p.code = e.practice_code
		order by e.record_id`.execute(db);
	return res.rows;
}

/** A source row → its published row, or null when its cell is suppressed or the county filter excludes it. */
export function publish(ctx: DatasetContext, s: SourceRow, filter: DatasetFilter): DatasetRow | null {
	if (!s.included) return null;
	const rec: SourceRecord = {
		record_id: s.record_id,
		practice_code: s.practice_code,
		practice_name: s.practice_name,
		county_fips: s.county_fips,
		region: s.region,
		state_fips: s.county_fips.slice(0, 2),
		// record_estimates keeps HUC-8 only; toRow takes a HUC-12, so pad it (the last 4 digits are never used).
		huc12: s.huc8 ? `${s.huc8}0000` : null,
		installed_on: s.installed_on,
		fy_installed: s.fy_installed,
		fy_first: s.fy_first,
		fy_last: s.fy_last,
		credited_acres: Number(s.credited_acres),
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
	const d = ctx.decisions.get(baseCellKey(rec));
	if (!d) return null;
	if (filter.county && d.level !== 'county') return null;
	return toRow(rec, d.level, d.showHuc8 ? huc8Of(rec.huc12) : null, ctx.pseudonym);
}

/**
 * Every published row of the filtered dataset, in batches (memory stays flat however many rows). The next
 * batch is asked for while the current one is being published, so the database and the encoder overlap.
 */
export async function* datasetRows(
	db: Kysely<Database>,
	ctx: DatasetContext,
	filter: DatasetFilter = {},
	batch = 5000
): AsyncGenerator<DatasetRow> {
	let next: Promise<SourceRow[]> | null = sourceBatch(db, ctx, filter, null, batch);
	while (next) {
		const rows: SourceRow[] = await next;
		next = rows.length < batch ? null : sourceBatch(db, ctx, filter, rows[rows.length - 1].record_id, batch);
		// A rejected prefetch is awaited (and thrown) on the next turn; do not let it go unhandled meanwhile.
		next?.catch(() => {});
		for (const s of rows) {
			const row = publish(ctx, s, filter);
			if (row) yield row;
		}
	}
}
