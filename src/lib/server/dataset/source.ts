// Reading the research dataset from the database: per-cell aggregates for the small-cell rule (computed in
// SQL, a few thousand rows), then the published rows themselves, computed by PostgreSQL from those decisions
// (the rule's outcome per cell, the funding categories and the pseudonym key are handed to the query as
// transaction-local settings) and streamed: COPY for CSV, keyset batches for the rest, so no export holds
// the whole result and the app does not decode and re-encode every row.
// The published row is specified by `toRow` in src/lib/domain/anonymise.ts; `publishedSelect` below is its
// SQL form, and tests/api/dataset-sql-rows.test.ts holds the two equal on random records.
// Source: record_estimates under the active reduction method (state fiscal years), the record's install
// date and funding program, the district's region and the practice name. Records count when installed
// (not withdrawn) or when they were in service in some fiscal year.
import { Readable } from 'node:stream';
import { CompiledQuery, sql, type Kysely } from 'kysely';
import type pg from 'pg';
import { to as copyTo } from 'pg-copy-streams';
import {
	DATASET_COLUMNS,
	ROUND_TO_5_FROM,
	decideCellAggregates,
	fundingCategory,
	type AnonymiseCounts,
	type CellAggregate,
	type CellDecision,
	type CellPool,
	type DatasetRow,
	type OpStats
} from '../../domain/anonymise';
import { getPool } from '../db';
import type { Database } from '../db/schema';
import { getActiveMethodVersion } from '../methods';
import { readSettings, SETTING_KEYS, smallCellKOf } from '../rollups/settings';
import { hmacPads } from './pseudonym';

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
	/** What every dataset query of this context reads as transaction-local settings (see `prepare`). */
	session: Record<SessionSetting, string>;
}

type SessionSetting = 'cells' | 'funding' | 'ipad' | 'opad';

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
				min(d.region collate "C") as region, greatest(sum(e.credited_acres), 0) as acres, count(*)::int as records
			from record_estimates e join records r on r.id = e.record_id join districts d on d.id = e.district_id
			where e.method_version = ${version} and ${INCLUDED}
			group by 1, 2, 3, 4, 5
		), cell_ops as (
			select county_fips, fy, practice_code, operation_key, min(region collate "C") as region, sum(acres) as acres, sum(records) as records
			from ops group by 1, 2, 3, 4
		)
		select county_fips, fy, practice_code, null as huc8, true as is_cell, min(region collate "C") as region, sum(records)::int as records,
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

/**
 * The cell decisions for the whole dataset (never for a filtered part), cached until the estimates, the
 * records or the rule's settings change.
 */
export async function datasetContext(db: Kysely<Database>, methodVersion?: string): Promise<DatasetContext> {
	const version = methodVersion ?? (await getActiveMethodVersion(db));
	const { k, dominance } = await rules(db);
	const stampRow = await sql<{ stamp: string }>`
		select coalesce(max(computed_at)::text, '') || '/' || count(*)::text
			|| '/' || coalesce((select max(updated_at)::text from records), '') as stamp
		from record_estimates where method_version = ${version}`.execute(db);
	const stamp = `${version}|${k}|${dominance}|${stampRow.rows[0]?.stamp}`;
	if (cache?.stamp === stamp) return cache.ctx;
	const steps = decideCellAggregates(await cellAggregates(db, version), { k, dominance });
	let step = steps.next();
	while (!step.done) step = steps.next(await poolStats(db, version, step.value));
	const { decisions, counts } = step.value;
	const cells: [string, number, string, string, string, boolean][] = [];
	for (const [key, d] of decisions) {
		if (!d) continue; // suppressed: no row of the cell is published
		const [, county, fy, practice] = key.split('|');
		cells.push([county, Number(fy), practice, d.level, d.region, d.showHuc8]);
	}
	const programs = await sql<{ p: string }>`select distinct funding_program as p from records where funding_program is not null`.execute(db);
	const funding = programs.rows.map((r) => [r.p, fundingCategory(r.p)]);
	const pads = await hmacPads(db);
	const session = { cells: JSON.stringify(cells), funding: JSON.stringify(funding), ...pads };
	const ctx: DatasetContext = { methodVersion: version, k, dominance, decisions, counts, session };
	cache = { stamp, ctx };
	return ctx;
}

/** Runs one statement on a single connection (a pooled client, or a Kysely transaction). */
export type DatasetExec = <R>(text: string, params?: unknown[]) => Promise<R[]>;

export const clientExec =
	(client: pg.PoolClient): DatasetExec =>
	async <R>(text: string, params: unknown[] = []) =>
		(await client.query(text, params)).rows as R[];

export const kyselyExec =
	(trx: Kysely<Database>): DatasetExec =>
	async <R>(text: string, params: unknown[] = []) =>
		(await trx.executeQuery<R>(CompiledQuery.raw(text, params))).rows;

/**
 * Hands the context to this transaction's dataset queries as transaction-local settings (so COPY, which
 * takes no parameters, reads them too; the pseudonym key never appears in a statement's text). Floats are
 * written in their shortest exact form, as JavaScript writes them.
 */
export async function prepare(exec: DatasetExec, ctx: DatasetContext): Promise<void> {
	await exec(
		`select set_config('runnel.dataset_cells', $1, true), set_config('runnel.dataset_funding', $2, true),
			set_config('runnel.dataset_ipad', $3, true), set_config('runnel.dataset_opad', $4, true),
			set_config('extra_float_digits', '1', true)`,
		[ctx.session.cells, ctx.session.funding, ctx.session.ipad, ctx.session.opad]
	);
}

/** A SQL string literal (standard_conforming_strings is on in every supported PostgreSQL). */
function lit(v: string): string {
	if (v.includes('\0')) throw new RangeError('a NUL character cannot be part of a query');
	return `'${v.replace(/'/g, "''")}'`;
}

function int(v: number): string {
	if (!Number.isSafeInteger(v)) throw new RangeError(`not a whole number: ${v}`);
	return String(v);
}

/** JavaScript's Math.round (halves up, toward +∞) on a float8 expression. */
const jsRound = (x: string) => `(floor(${x}) + case when (${x}) - floor(${x}) >= 0.5 then 1 else 0 end)`;
/** `round1` of toRow: Math.round(x * 10) / 10 in float8. */
const round1 = (x: string) => `(${jsRound(`(${x}) * 10`)} / 10)`;

/** The SQL expression of each published column (toRow in src/lib/domain/anonymise.ts, in SQL). */
function columnSql(ctx: DatasetContext): Record<(typeof DATASET_COLUMNS)[number], string> {
	return {
		pid: `encode(sha256(k.opad || sha256(k.ipad || convert_to(e.record_id::text, 'UTF8'))), 'hex')`,
		practice_code: 'e.practice_code',
		practice_name: 'p.name',
		area_level: 'c.level',
		county_fips: `case when c.level = 'county' then e.county_fips end`,
		region: `case when c.level = 'region' then c.region end`,
		state_fips: 'substr(e.county_fips, 1, 2)',
		huc8: `case when c.level = 'county' and c.show_huc8 and e.huc8 ~ '^[0-9]{8}$' then e.huc8 end`,
		install_year: 'extract(year from r.installed_on)::int',
		install_month: 'extract(month from r.installed_on)::int',
		fy_installed: 'e.state_fy_installed',
		fy_in_service_first: 'e.state_fy_first',
		fy_in_service_last: 'e.state_fy_last',
		credited_acres: 'a.acres',
		n_lb_mean: round1('e.n_lb_mean::float8 * a.scale'),
		n_lb_low: round1('e.n_lb_low::float8 * a.scale'),
		n_lb_high: round1('e.n_lb_high::float8 * a.scale'),
		p_lb_mean: round1('e.p_lb_mean::float8 * a.scale'),
		p_lb_low: round1('e.p_lb_low::float8 * a.scale'),
		p_lb_high: round1('e.p_lb_high::float8 * a.scale'),
		method_version: lit(ctx.methodVersion),
		funding_category: `case when r.funding_program is null then 'not_reported' else f.category end`
	};
}

/**
 * The published rows of the filtered dataset in record order (after `afterId`, at most `limit`), as one
 * SELECT with every value inlined as a literal (COPY takes no parameters). With `withId`, a last column
 * `record_id` gives the keyset position (never published).
 */
export function publishedSelect(
	ctx: DatasetContext,
	filter: DatasetFilter,
	opts: { afterId?: string | null; limit?: number; withId?: boolean } = {}
): string {
	const where = [`e.method_version = ${lit(ctx.methodVersion)}`, `(r.status = 'installed' or e.state_fy_first is not null)`];
	if (opts.afterId != null) {
		if (!/^\d+$/.test(opts.afterId)) throw new RangeError(`not a record id: ${opts.afterId}`);
		where.push(`e.record_id > ${opts.afterId}`);
	}
	if (filter.practice) where.push(`e.practice_code = ${lit(filter.practice)}`);
	if (filter.county) where.push(`e.county_fips = ${lit(filter.county)} and c.level = 'county'`);
	if (filter.fy != null) where.push(`e.state_fy_first <= ${int(filter.fyTo ?? filter.fy)} and e.state_fy_last >= ${int(filter.fy)}`);
	const columns = columnSql(ctx);
	const select = DATASET_COLUMNS.map((c) => `${columns[c]} as ${c}`);
	if (opts.withId) select.push('e.record_id::text as record_id');
	return `with c as materialized (
			select j->>0 as county_fips, (j->>1)::int as fy, j->>2 as practice_code, j->>3 as level, j->>4 as region, (j->>5)::boolean as show_huc8
			from json_array_elements(current_setting('runnel.dataset_cells')::json) as j
		), f as materialized (
			select j->>0 as program, j->>1 as category from json_array_elements(current_setting('runnel.dataset_funding')::json) as j
		), k as materialized (
			select decode(current_setting('runnel.dataset_ipad'), 'hex') as ipad, decode(current_setting('runnel.dataset_opad'), 'hex') as opad
		)
		select ${select.join(',\n\t\t\t')}
		from record_estimates e
			join records r on r.id = e.record_id
			join practices p on p.code = e.practice_code
			join c on c.county_fips = e.county_fips and c.fy = e.state_fy_installed and c.practice_code = e.practice_code
			left join f on f.program = r.funding_program
			cross join k
			cross join lateral (select coalesce(e.credited_acres::float8, 0) as exact) x
			cross join lateral (
				select r2.acres, case when x.exact > 0 then r2.acres / x.exact else 0 end as scale
				from (select case when not (x.exact > 0) then 0::float8
					when ${jsRound('x.exact')} < ${ROUND_TO_5_FROM} then ${jsRound('x.exact')}
					else ${jsRound('x.exact / 5')} * 5 end as acres) r2
			) a
		where ${where.join(' and ')}
		order by e.record_id${opts.limit != null ? ` limit ${int(opts.limit)}` : ''}`;
}

type PublishedRow = DatasetRow & { record_id?: string };

/** One page of published rows after `afterId`, with the position to continue from (null when there is no more). */
export async function datasetPage(
	exec: DatasetExec,
	ctx: DatasetContext,
	filter: DatasetFilter,
	afterId: string | null,
	limit: number
): Promise<{ rows: DatasetRow[]; last: string | null }> {
	const rows = await exec<PublishedRow>(publishedSelect(ctx, filter, { afterId, limit, withId: true }));
	const last = rows.length === limit ? rows[rows.length - 1].record_id! : null;
	for (const r of rows) delete r.record_id;
	return { rows, last };
}

/**
 * Every published row of the filtered dataset, in batches (memory stays flat however many rows). `exec` runs
 * on one connection inside a transaction the caller opened; `prepare` has been called on it.
 */
export async function* datasetRows(exec: DatasetExec, ctx: DatasetContext, filter: DatasetFilter = {}, batch = 5000): AsyncGenerator<DatasetRow> {
	let after: string | null = null;
	do {
		const page: { rows: DatasetRow[]; last: string | null } = await datasetPage(exec, ctx, filter, after, batch);
		yield* page.rows;
		after = page.last;
	} while (after);
}

/**
 * A pooled connection inside a read-only repeatable-read transaction with the context prepared, for a
 * stream; `end(error?)` commits and releases it, or (after an error or a cancelled stream, when the
 * connection may be mid-COPY) throws it away.
 */
async function streamingSession(ctx: DatasetContext): Promise<{ client: pg.PoolClient; end: (error?: unknown) => Promise<void> }> {
	const client = await getPool().connect();
	let ended = false;
	const end = async (error?: unknown) => {
		if (ended) return;
		ended = true;
		if (error) return client.release(error instanceof Error ? error : new Error(String(error)));
		try {
			await client.query('commit');
			client.release();
		} catch (e) {
			client.release(e as Error);
		}
	};
	try {
		await client.query('begin isolation level repeatable read read only');
		await prepare(clientExec(client), ctx);
	} catch (e) {
		await end(e);
		throw e;
	}
	return { client, end };
}

/** A byte stream as a web ReadableStream, one chunk per pull (backpressure), calling `end` once. */
function webStream(source: AsyncIterator<Uint8Array | string>, end: (error?: unknown) => Promise<void>, onCancel?: () => void) {
	const enc = new TextEncoder();
	return new ReadableStream<Uint8Array>({
		async pull(controller) {
			try {
				const { value, done } = await source.next();
				if (done) {
					await end();
					controller.close();
				} else controller.enqueue(typeof value === 'string' ? enc.encode(value) : new Uint8Array(value));
			} catch (e) {
				await end(e);
				controller.error(e);
			}
		},
		async cancel() {
			onCancel?.();
			await end(new Error('the client went away'));
		}
	});
}

/** The filtered dataset as CSV with a header row: PostgreSQL's COPY of the published rows, streamed. */
export async function datasetCsvStream(ctx: DatasetContext, filter: DatasetFilter): Promise<ReadableStream<Uint8Array>> {
	const { client, end } = await streamingSession(ctx);
	const copy = client.query(copyTo(`copy (${publishedSelect(ctx, filter)}) to stdout with (format csv, header)`));
	return webStream((copy as unknown as Readable)[Symbol.asyncIterator](), end, () => copy.destroy());
}

/** The filtered dataset as NDJSON, one published row a line, read in keyset batches. */
export async function datasetNdjsonStream(ctx: DatasetContext, filter: DatasetFilter): Promise<ReadableStream<Uint8Array>> {
	const { client, end } = await streamingSession(ctx);
	async function* lines() {
		for await (const rows of batches(datasetRows(clientExec(client), ctx, filter), 1000)) {
			let out = '';
			for (const r of rows) out += JSON.stringify(r) + '\n';
			yield out;
		}
	}
	return webStream(lines(), end);
}

/** Groups an async sequence into arrays of `size`. */
export async function* batches<T>(items: AsyncIterable<T>, size: number): AsyncGenerator<T[]> {
	let buf: T[] = [];
	for await (const t of items) {
		buf.push(t);
		if (buf.length >= size) {
			yield buf;
			buf = [];
		}
	}
	if (buf.length > 0) yield buf;
}
