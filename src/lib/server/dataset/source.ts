// Reading the research dataset from the database: per-cell aggregates for the small-cell rule (computed in
// SQL, a few thousand rows), then the published rows themselves, read by PostgreSQL with those decisions
// (the rule's outcome per cell and the funding categories are handed to the query as transaction-local
// settings) and streamed: COPY for CSV, keyset batches for the rest, so no export holds the whole result and
// the app does not decode and re-encode every row.
// What does not depend on the decisions — the pseudonymous id, rounded acres and estimates, install year and
// month — is stored with each estimate when it is written (migration 2026-12-05T0100_dataset_published), so
// an export reads it rather than computing it for every row again.
// The published row is specified by `toRow` in src/lib/domain/anonymise.ts; `publishedSelect` below is its
// SQL form, and tests/api/dataset-sql-rows.test.ts holds the two equal on random records.
// Source: record_estimates under the active reduction method (state fiscal years), the record's install
// date and funding program, the district's region and the practice name. Records count when installed
// (not withdrawn) or when they were in service in some fiscal year.
import { createHash } from 'node:crypto';
import { Readable } from 'node:stream';
import { CompiledQuery, sql, type Kysely } from 'kysely';
import type pg from 'pg';
import { to as copyTo } from 'pg-copy-streams';
import {
	DATASET_COLUMNS,
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

/** Part of the dataset: installed (not withdrawn), or in service in some fiscal year (stored with the estimate). */
const INCLUDED = sql`e.pub_included`;

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
			from record_estimates e join districts d on d.id = e.district_id
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
			from record_estimates e
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

const PID_FINGERPRINT = 'dataset_pid_fingerprint';
/** Advisory lock of the pid fill ('RNPD'). */
const PID_LOCK = 0x524e5044;

/** The pseudonym as SQL over `id` (text) with the HMAC pads as bytea SQL expressions (see hmacPads). */
const hmacSql = (id: string, ipad: string, opad: string) =>
	`encode(sha256(${opad} || sha256(${ipad} || convert_to(${id}, 'UTF8'))), 'hex')`;

/**
 * Stores the pid of every estimate row written without one (rows written by the rollup service carry theirs;
 * rows from before the column, or written by other means, do not). When the pseudonym key has changed since
 * the stored pids were made, every pid is made again.
 */
export async function fillPids(db: Kysely<Database>): Promise<void> {
	const pads = await hmacPads(db);
	const fingerprint = createHash('sha256').update(`${pads.ipad}:${pads.opad}`).digest('hex').slice(0, 16);
	const fill = async (trx: Kysely<Database>) => {
		await sql`select pg_advisory_xact_lock(${PID_LOCK})`.execute(trx);
		await sql`set local jit = off`.execute(trx);
		const stored = await trx.selectFrom('settings').select('value').where('key', '=', PID_FINGERPRINT).executeTakeFirst();
		if (stored?.value !== fingerprint) {
			await sql`update record_estimates set pub_pid = null where pub_pid is not null`.execute(trx);
			await trx
				.insertInto('settings')
				.values({ key: PID_FINGERPRINT, value: JSON.stringify(fingerprint) })
				.onConflict((oc) => oc.column('key').doUpdateSet({ value: JSON.stringify(fingerprint) }))
				.execute();
		}
		await sql
			.raw(
				`update record_estimates set pub_pid = ${hmacSql('record_id::text', `decode(${lit(pads.ipad)}, 'hex')`, `decode(${lit(pads.opad)}, 'hex')`)} where pub_pid is null`
			)
			.execute(trx);
	};
	if (db.isTransaction) await fill(db);
	else await db.transaction().execute(fill);
}

/**
 * The cell decisions for the whole dataset (never for a filtered part), cached until the stored estimates or
 * the rule's settings change.
 */
export async function datasetContext(db: Kysely<Database>, methodVersion?: string): Promise<DatasetContext> {
	const version = methodVersion ?? (await getActiveMethodVersion(db));
	const { k, dominance } = await rules(db);
	// Every committed change to the stored estimates moves this counter (migration 2026-12-05T0200); a record's
	// changes reach the dataset only through its estimate rows, which the rollup service rewrites.
	const generation = await db.selectFrom('estimate_generation').select('n').executeTakeFirst();
	const stamp = `${version}|${k}|${dominance}|${generation?.n ?? ''}`;
	if (cache?.stamp === stamp) return cache.ctx;
	// Inside a caller's transaction the caller has filled them first (publishRelease); rows still without one
	// get theirs computed by the query.
	if (!db.isTransaction) await fillPids(db);
	const steps = decideCellAggregates(await cellAggregates(db, version), { k, dominance });
	let step = steps.next();
	while (!step.done) step = steps.next(await poolStats(db, version, step.value));
	const { decisions, counts } = step.value;
	// Published cells by `county|fy|practice` → [level, region, show HUC-8, practice name]; suppressed cells are absent.
	const names = new Map((await db.selectFrom('practices').select(['code', 'name']).execute()).map((p) => [p.code, p.name]));
	const cells: Record<string, [string, string, boolean, string]> = {};
	for (const [key, d] of decisions) {
		if (!d) continue;
		const [, county, fy, practice] = key.split('|');
		cells[`${county}|${fy}|${practice}`] = [d.level, d.region, d.showHuc8, names.get(practice) ?? practice];
	}
	const programs = await sql<{ p: string }>`select distinct funding_program as p from records where funding_program is not null`.execute(
		db
	);
	const funding = Object.fromEntries(programs.rows.map((r) => [r.p, fundingCategory(r.p)]));
	const session = { cells: JSON.stringify(cells), funding: JSON.stringify(funding), ...(await hmacPads(db)) };
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
 * written in their shortest exact form, as JavaScript writes them; JIT compilation is off (it cost seconds
 * per export and bought nothing for these expressions).
 */
export async function prepare(exec: DatasetExec, ctx: DatasetContext): Promise<void> {
	await exec(
		`select set_config('runnel.dataset_cells', $1, true), set_config('runnel.dataset_funding', $2, true),
			set_config('runnel.dataset_ipad', $3, true), set_config('runnel.dataset_opad', $4, true),
			set_config('extra_float_digits', '1', true), set_config('jit', 'off', true)`,
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

/**
 * The prepared settings as uncorrelated scalar subqueries: PostgreSQL evaluates each once per statement (an
 * InitPlan) and hands every row the same value, where a joined one-row CTE would be copied for every row.
 */
const SETTING = {
	cells: `(select current_setting('runnel.dataset_cells')::jsonb)`,
	funding: `(select current_setting('runnel.dataset_funding')::jsonb)`,
	ipad: `(select decode(current_setting('runnel.dataset_ipad'), 'hex'))`,
	opad: `(select decode(current_setting('runnel.dataset_opad'), 'hex'))`
};

/** The SQL expression of each published column (toRow in src/lib/domain/anonymise.ts, in SQL). */
function columnSql(ctx: DatasetContext): Record<(typeof DATASET_COLUMNS)[number], string> {
	return {
		pid: `coalesce(s.pub_pid, ${hmacSql('s.record_id::text', SETTING.ipad, SETTING.opad)})`,
		practice_code: 's.practice_code',
		practice_name: 's.practice_name',
		area_level: 's.level',
		county_fips: `case when s.level = 'county' then s.county_fips end`,
		region: `case when s.level = 'region' then s.region end`,
		state_fips: 'substr(s.county_fips, 1, 2)',
		huc8: `case when s.level = 'county' and s.show_huc8 and s.huc8 ~ '^[0-9]{8}$' then s.huc8 end`,
		install_year: 's.pub_install_year',
		install_month: 's.pub_install_month',
		fy_installed: 's.state_fy_installed',
		fy_in_service_first: 's.state_fy_first',
		fy_in_service_last: 's.state_fy_last',
		credited_acres: 's.pub_acres',
		n_lb_mean: 's.pub_n_mean',
		n_lb_low: 's.pub_n_low',
		n_lb_high: 's.pub_n_high',
		p_lb_mean: 's.pub_p_mean',
		p_lb_low: 's.pub_p_low',
		p_lb_high: 's.pub_p_high',
		method_version: lit(ctx.methodVersion),
		funding_category: `case when s.pub_funding_program is null then 'not_reported' else ${SETTING.funding} ->> s.pub_funding_program end`
	};
}

/**
 * The dataset's rows in record order as one SELECT, every value inlined as a literal (COPY takes no
 * parameters). The rows are cut from record_estimates by its (method_version, record_id) index and read
 * from it alone: the per-record values are stored there (see the top of this file), and the cells, practice
 * names and funding categories are looked up in the prepared settings. Only rows that are part of the
 * dataset (installed, or in service in some FY) are read. Without `limit` only published rows come back;
 * with it, every such row of the cut does, with `record_id` (the keyset position) and `keep` (false: in a
 * suppressed cell), so pages advance past left-out rows.
 */
export function publishedSelect(
	ctx: DatasetContext,
	filter: DatasetFilter,
	opts: { afterId?: string | null; limit?: number } = {}
): string {
	const where = [`e.method_version = ${lit(ctx.methodVersion)}`, 'e.pub_included'];
	if (opts.afterId != null) {
		if (!/^\d+$/.test(opts.afterId)) throw new RangeError(`not a record id: ${opts.afterId}`);
		where.push(`e.record_id > ${opts.afterId}`);
	}
	if (filter.practice) where.push(`e.practice_code = ${lit(filter.practice)}`);
	if (filter.county) where.push(`e.county_fips = ${lit(filter.county)}`);
	if (filter.fy != null) where.push(`e.state_fy_first <= ${int(filter.fyTo ?? filter.fy)} and e.state_fy_last >= ${int(filter.fy)}`);
	const keep = `s.level is not null${filter.county ? ` and s.level = 'county'` : ''}`;
	const columns = columnSql(ctx);
	const select = DATASET_COLUMNS.map((c) => `${columns[c]} as ${c}`);
	if (opts.limit != null) select.push('s.record_id::text as record_id', `coalesce(${keep}, false) as keep`);
	// Each layer is fenced (offset 0) so PostgreSQL looks the cell up once a row instead of copying the
	// expression into every use above; each keeps the record order, so no layer sorts.
	return `select ${select.join(',\n\t\t\t')}
		from (
			select s1.*, s1.d ->> 0 as level, s1.d ->> 1 as region, (s1.d ->> 2)::boolean as show_huc8, s1.d ->> 3 as practice_name
			from (
				select e.record_id, e.pub_pid, e.practice_code, e.county_fips, e.huc8, e.state_fy_installed, e.state_fy_first, e.state_fy_last,
					e.pub_install_year, e.pub_install_month, e.pub_funding_program, e.pub_acres,
					e.pub_n_mean, e.pub_n_low, e.pub_n_high, e.pub_p_mean, e.pub_p_low, e.pub_p_high,
					${SETTING.cells} -> (e.county_fips || '|' || e.state_fy_installed || '|' || e.practice_code) as d
				from record_estimates e
				where ${where.join(' and ')}
				order by e.record_id${opts.limit != null ? ` limit ${int(opts.limit)}` : ''}
				offset 0
			) as s1
			order by s1.record_id offset 0
		) as s
		${opts.limit != null ? '' : `where ${keep}`}
		order by s.record_id`;
}

type PublishedRow = DatasetRow & { record_id?: string; keep?: boolean };

/**
 * Up to `limit` published rows after `afterId`, with the position to continue from (null when there is no
 * more). Left-out rows are skipped, so a page may read further than `limit` source rows to fill itself.
 */
export async function datasetPage(
	exec: DatasetExec,
	ctx: DatasetContext,
	filter: DatasetFilter,
	afterId: string | null,
	limit: number
): Promise<{ rows: DatasetRow[]; last: string | null }> {
	const rows: DatasetRow[] = [];
	let last = afterId;
	while (rows.length < limit) {
		const want = limit - rows.length;
		const cut = await exec<PublishedRow>(publishedSelect(ctx, filter, { afterId: last, limit: want }));
		for (const r of cut) {
			last = r.record_id!;
			if (!r.keep) continue;
			delete r.record_id;
			delete r.keep;
			rows.push(r);
		}
		if (cut.length < want) return { rows, last: null };
	}
	return { rows, last };
}

/**
 * Every published row of the filtered dataset, in batches (memory stays flat however many rows). `exec` runs
 * on one connection inside a transaction the caller opened; `prepare` has been called on it.
 */
export async function* datasetRows(
	exec: DatasetExec,
	ctx: DatasetContext,
	filter: DatasetFilter = {},
	batch = 5000
): AsyncGenerator<DatasetRow> {
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
				} else
					controller.enqueue(
						typeof value === 'string' ? enc.encode(value) : new Uint8Array(value.buffer, value.byteOffset, value.byteLength)
					);
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

/** COPY yields one chunk per row; hand the response about 64 KB at a time instead. */
async function* coalesce(source: AsyncIterable<Buffer>, size = 64 * 1024): AsyncGenerator<Buffer> {
	let parts: Buffer[] = [];
	let length = 0;
	for await (const chunk of source) {
		parts.push(chunk);
		length += chunk.length;
		if (length >= size) {
			yield Buffer.concat(parts, length);
			parts = [];
			length = 0;
		}
	}
	if (length > 0) yield Buffer.concat(parts, length);
}

/** The filtered dataset as CSV with a header row: PostgreSQL's COPY of the published rows, streamed. */
export async function datasetCsvStream(ctx: DatasetContext, filter: DatasetFilter): Promise<ReadableStream<Uint8Array>> {
	const { client, end } = await streamingSession(ctx);
	const copy = client.query(copyTo(`copy (${publishedSelect(ctx, filter)}) to stdout with (format csv, header)`));
	return webStream(coalesce(copy as unknown as Readable), end, () => copy.destroy());
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
