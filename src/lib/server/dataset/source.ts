// Reading the research dataset from the database: cell contributions for the small-cell rule (one
// aggregate query), then the records themselves in keyset batches so no export holds the whole result.
// Source: record_estimates under the active reduction method (state fiscal years), the record's install
// date and funding program, the district's region and the practice name. Records count when installed
// (not withdrawn) or when they were in service in some fiscal year.
import { sql, type Kysely } from 'kysely';
import {
	baseCellKey,
	decideCells,
	huc8Of,
	toRow,
	type AnonymiseCounts,
	type CellDecision,
	type DatasetRow,
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
	const contributions = await sql<{
		county_fips: string;
		region: string;
		fy: number;
		practice_code: string;
		huc8: string | null;
		operation_key: string;
		acres: string;
		records: number;
	}>`
		select e.county_fips, d.region, e.state_fy_installed as fy, e.practice_code, e.huc8, e.operation_key,
			sum(e.credited_acres)::text as acres, count(*)::int as records
		from record_estimates e join records r on r.id = e.record_id join districts d on d.id = e.district_id
		where e.method_version = ${version} and ${INCLUDED}
		group by 1, 2, 3, 4, 5, 6`.execute(db);
	const { decisions, counts } = decideCells(
		contributions.rows.map((c) => ({
			method_version: version,
			county_fips: c.county_fips,
			region: c.region,
			state_fips: c.county_fips.slice(0, 2),
			fy_installed: c.fy,
			practice_code: c.practice_code,
			huc8: c.huc8,
			operation_key: c.operation_key,
			acres: Number(c.acres),
			records: c.records
		})),
		{ k, dominance }
	);
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
