// Keeps the stored estimates (`record_estimates`) and the summary cells (`rollup_cells`) current.
//
// - `refreshRecords(trx, ids)` runs inside every write transaction that changes practice records (through
//   `afterRecordsChanged`): it re-estimates the changed records and the records stacked on the same fields
//   under the active method, then recomputes only the summary cells those records touched before or after
//   the change — the (district, FY basis, basis, FY) keys of their old and new footprints. Other method
//   versions are marked stale and rebuilt when someone asks for them.
// - `rebuildMethod(db, version)` recomputes one method version from all records, in chunks (estimates by
//   record-id ranges, cells by groups of districts), for a method just made active, a method asked for
//   without a current summary, or a changed state FY start month.
//
// Every write takes the same transaction-level advisory lock, so a batch commit and a rebuild chunk never
// interleave on the same rows. Everything is set-based: one query loads a chunk of records, one writes
// its estimates (unnest), one recomputes the touched cells (GROUPING SETS).
import { sql, type Kysely, type Transaction } from 'kysely';
import type { Database } from '../db/schema';
import { recordFacts, type FactRecord, type RecordFact } from '$lib/domain/rollup-facts';
import type { ReductionMethod } from '$lib/domain/reduction-method';
import { activeMethodVersion, loadMethod } from './method-source';
import { stateFyStartMonth } from './settings';

type Db = Kysely<Database> | Transaction<Database>;

/** Advisory lock shared by every writer of rollup data ('RNRL'). */
export const ROLLUP_LOCK_KEY = 0x524e524c;
/** Records per chunk when rebuilding, and per INSERT when writing estimates. */
export const CHUNK = 5000;
/** Districts per transaction when rebuilding cells. */
const DISTRICT_CHUNK = 8;

export async function lockRollups(trx: Transaction<Database>): Promise<void> {
	await sql`select pg_advisory_xact_lock(${ROLLUP_LOCK_KEY})`.execute(trx);
}

// --- loading and writing per-record facts --------------------------------------------------------------

/** The records with these ids plus every record now or formerly on the same (district, field). */
export async function loadFactRecords(db: Db, ids: readonly string[], methodVersion: string): Promise<FactRecord[]> {
	if (ids.length === 0) return [];
	const { rows } = await sql<FactRecord>`
		with target as (select unnest(${[...ids]}::bigint[]) as id),
		fields as (
			select r.district_id, r.field_id from records r join target t on t.id = r.id where r.field_id is not null
			union
			select e.district_id, e.field_id from record_estimates e join target t on t.id = e.record_id
			where e.method_version = ${methodVersion} and e.field_id is not null
		),
		wanted as (
			select id from target
			union
			select r.id from records r join fields f on f.district_id = r.district_id and f.field_id = r.field_id
		)
		select r.id::text as id, r.district_id, r.practice_code, r.county_fips, r.installed_on, r.status, r.withdrawn_on,
			r.extent_acres, r.drainage_area_acres, r.field_id, r.operation_id, r.huc12, r.cost_total_usd, r.cost_share_usd,
			p.lifespan_years as catalog_lifespan_years
		from records r join wanted w on w.id = r.id join practices p on p.code = r.practice_code
		order by r.id`.execute(db);
	return rows;
}

export async function writeFacts(db: Db, facts: readonly RecordFact[]): Promise<void> {
	for (let i = 0; i < facts.length; i += CHUNK) {
		const part = facts.slice(i, i + CHUNK);
		const col = <T>(f: (x: RecordFact) => T): T[] => part.map(f);
		await sql`
			insert into record_estimates (record_id, method_version, counted, reason, credited_acres,
				n_lb_mean, n_lb_low, n_lb_high, p_lb_mean, p_lb_low, p_lb_high,
				district_id, county_fips, huc8, practice_code, field_id, operation_key, cost_usd, cost_share_usd,
				state_fy_start_month, state_fy_installed, state_fy_first, state_fy_last,
				federal_fy_installed, federal_fy_first, federal_fy_last, computed_at)
			select u.*, now() from unnest(
				${col((x) => x.record_id)}::bigint[], ${col((x) => x.method_version)}::text[], ${col((x) => x.counted)}::boolean[],
				${col((x) => x.reason)}::text[], ${col((x) => x.credited_acres)}::numeric[],
				${col((x) => x.n_lb.mean)}::numeric[], ${col((x) => x.n_lb.low)}::numeric[], ${col((x) => x.n_lb.high)}::numeric[],
				${col((x) => x.p_lb.mean)}::numeric[], ${col((x) => x.p_lb.low)}::numeric[], ${col((x) => x.p_lb.high)}::numeric[],
				${col((x) => x.district_id)}::int[], ${col((x) => x.county_fips)}::char(5)[], ${col((x) => x.huc8)}::char(8)[],
				${col((x) => x.practice_code)}::text[], ${col((x) => x.field_id)}::text[], ${col((x) => x.operation_key)}::text[],
				${col((x) => x.cost_usd)}::numeric[], ${col((x) => x.cost_share_usd)}::numeric[],
				${col((x) => x.state_fy_start_month)}::smallint[], ${col((x) => x.state.installed)}::int[],
				${col((x) => x.state.first)}::int[], ${col((x) => x.state.last)}::int[],
				${col((x) => x.federal.installed)}::int[], ${col((x) => x.federal.first)}::int[], ${col((x) => x.federal.last)}::int[]
			) as u
			on conflict (record_id, method_version) do update set
				counted = excluded.counted, reason = excluded.reason, credited_acres = excluded.credited_acres,
				n_lb_mean = excluded.n_lb_mean, n_lb_low = excluded.n_lb_low, n_lb_high = excluded.n_lb_high,
				p_lb_mean = excluded.p_lb_mean, p_lb_low = excluded.p_lb_low, p_lb_high = excluded.p_lb_high,
				district_id = excluded.district_id, county_fips = excluded.county_fips, huc8 = excluded.huc8,
				practice_code = excluded.practice_code, field_id = excluded.field_id, operation_key = excluded.operation_key,
				cost_usd = excluded.cost_usd, cost_share_usd = excluded.cost_share_usd,
				state_fy_start_month = excluded.state_fy_start_month, state_fy_installed = excluded.state_fy_installed,
				state_fy_first = excluded.state_fy_first, state_fy_last = excluded.state_fy_last,
				federal_fy_installed = excluded.federal_fy_installed, federal_fy_first = excluded.federal_fy_first,
				federal_fy_last = excluded.federal_fy_last, computed_at = excluded.computed_at`.execute(db);
	}
}

// --- summary cells ---------------------------------------------------------------------------------------

/** A summary key whose cells (every geography and practice level) are recomputed together. */
export interface CellKey {
	district_id: number;
	fy_basis: 'state' | 'federal';
	basis: 'installed' | 'in_service';
	fy: number;
}

/** The keys the stored footprints of these records count in (read before and after re-estimating them). */
export async function footprintKeys(db: Db, methodVersion: string, recordIds: readonly string[]): Promise<CellKey[]> {
	if (recordIds.length === 0) return [];
	const { rows } = await sql<CellKey>`
		select distinct e.district_id, v.fy_basis, v.basis, g.fy
		from record_estimates e
		cross join lateral (values
			('state', 'installed', e.state_fy_installed, e.state_fy_installed),
			('state', 'in_service', e.state_fy_first, e.state_fy_last),
			('federal', 'installed', e.federal_fy_installed, e.federal_fy_installed),
			('federal', 'in_service', e.federal_fy_first, e.federal_fy_last)
		) as v(fy_basis, basis, fy_from, fy_to)
		cross join lateral generate_series(v.fy_from, v.fy_to) as g(fy)
		where e.method_version = ${methodVersion} and e.record_id = any(${[...recordIds]}::bigint[])`.execute(db);
	return rows;
}

/**
 * The body of every cell computation: the facts of the given scope expanded to one row per fiscal year
 * counted (installed and in-service bases, state and federal FYs), then summed by district × FY at six
 * levels — county × practice, county, HUC-8 × practice, HUC-8, practice, all — in one GROUPING SETS pass.
 */
function cellsSelect(methodVersion: string, factsWhere: ReturnType<typeof sql>, keyJoin: ReturnType<typeof sql>) {
	return sql`
		with facts as (
			select * from record_estimates e where e.method_version = ${methodVersion} and ${factsWhere}
		),
		x as (
			select v.fy_basis, v.basis, g.fy, f.district_id, f.county_fips, f.huc8, f.practice_code, f.operation_key,
				f.credited_acres, f.cost_usd, f.cost_share_usd, f.n_lb_mean, f.n_lb_low, f.n_lb_high, f.p_lb_mean, f.p_lb_low, f.p_lb_high
			from facts f
			cross join lateral (values
				('state', 'installed', f.state_fy_installed, f.state_fy_installed),
				('state', 'in_service', f.state_fy_first, f.state_fy_last),
				('federal', 'installed', f.federal_fy_installed, f.federal_fy_installed),
				('federal', 'in_service', f.federal_fy_first, f.federal_fy_last)
			) as v(fy_basis, basis, fy_from, fy_to)
			cross join lateral generate_series(v.fy_from, v.fy_to) as g(fy)
		),
		y as (select x.* from x ${keyJoin})
		select ${methodVersion}::text as method_version, fy_basis, basis,
			case when grouping(county_fips) = 0 then 'county' when grouping(huc8) = 0 then 'huc8' else 'district' end as geo_level,
			fy, district_id,
			case when grouping(county_fips) = 0 then county_fips::text when grouping(huc8) = 0 then coalesce(huc8::text, '') else '' end as geo,
			case when grouping(practice_code) = 0 then practice_code else '*' end as practice_code,
			count(*)::int as practices, count(distinct operation_key)::int as operations,
			sum(credited_acres) as credited_acres, coalesce(sum(cost_usd), 0) as cost_usd, coalesce(sum(cost_share_usd), 0) as cost_share_usd,
			sum(n_lb_mean) as n_lb_mean, sum(n_lb_low) as n_lb_low, sum(n_lb_high) as n_lb_high,
			sum(p_lb_mean) as p_lb_mean, sum(p_lb_low) as p_lb_low, sum(p_lb_high) as p_lb_high
		from y
		group by fy_basis, basis, fy, district_id,
			grouping sets ((county_fips, practice_code), (county_fips), (huc8, practice_code), (huc8), (practice_code), ())`;
}

const CELL_COLUMNS = sql`(method_version, fy_basis, basis, geo_level, fy, district_id, geo, practice_code, practices, operations,
	credited_acres, cost_usd, cost_share_usd, n_lb_mean, n_lb_low, n_lb_high, p_lb_mean, p_lb_low, p_lb_high)`;

/** Recomputes the cells of these keys from the stored facts (delete, then insert what the facts give). */
export async function recomputeCells(db: Db, methodVersion: string, keys: readonly CellKey[]): Promise<void> {
	if (keys.length === 0) return;
	const d = keys.map((k) => k.district_id);
	const fb = keys.map((k) => k.fy_basis);
	const b = keys.map((k) => k.basis);
	const fy = keys.map((k) => k.fy);
	const aff = sql`(select distinct * from unnest(${d}::int[], ${fb}::text[], ${b}::text[], ${fy}::int[]) as a(district_id, fy_basis, basis, fy))`;
	await sql`
		delete from rollup_cells c using ${aff} as a
		where c.method_version = ${methodVersion} and c.district_id = a.district_id and c.fy_basis = a.fy_basis
			and c.basis = a.basis and c.fy = a.fy`.execute(db);
	await sql`insert into rollup_cells ${CELL_COLUMNS} ${cellsSelect(
		methodVersion,
		sql`e.district_id = any(${[...new Set(d)]}::int[])`,
		sql`join ${aff} as a on a.district_id = x.district_id and a.fy_basis = x.fy_basis and a.basis = x.basis and a.fy = x.fy`
	)}`.execute(db);
}

/** Recomputes every cell of these districts (used by a full rebuild). */
export async function recomputeDistrictCells(db: Db, methodVersion: string, districtIds: readonly number[]): Promise<void> {
	if (districtIds.length === 0) return;
	await sql`delete from rollup_cells where method_version = ${methodVersion} and district_id = any(${[...districtIds]}::int[])`.execute(db);
	await sql`insert into rollup_cells ${CELL_COLUMNS} ${cellsSelect(
		methodVersion,
		sql`e.district_id = any(${[...districtIds]}::int[])`,
		sql``
	)}`.execute(db);
}

// --- refresh state ---------------------------------------------------------------------------------------

export type RefreshStatus = Database['rollup_refresh']['status'];

export async function summaryState(db: Db, methodVersion: string) {
	return db.selectFrom('rollup_refresh').selectAll().where('method_version', '=', methodVersion).executeTakeFirst();
}

/** Whether a method's stored summary can answer now (built, and with the current state FY start month). */
export function isCurrent(state: { status: RefreshStatus; state_fy_start_month: number | null } | undefined, startMonth: number): boolean {
	return !!state && state.status === 'ready' && state.state_fy_start_month === startMonth;
}

/** Asks for a rebuild of a method version (no-op while one is running with the current start month). */
export async function requestRebuild(db: Db, methodVersion: string): Promise<void> {
	await sql`
		insert into rollup_refresh (method_version, status, requested_at, updated_at)
		values (${methodVersion}, 'pending', now(), now())
		on conflict (method_version) do update set status = 'pending', requested_at = now(), updated_at = now(), error = null
		where rollup_refresh.status <> 'running' and rollup_refresh.status <> 'pending'`.execute(db);
}

/** Marks every other method's summary stale: records changed and only the active method followed. */
async function markOthersStale(db: Db, activeVersion: string): Promise<void> {
	await db
		.updateTable('rollup_refresh')
		.set({ status: 'stale', updated_at: sql`now()` as unknown as Date })
		.where('method_version', '<>', activeVersion)
		.where('status', 'in', ['ready', 'running'])
		.execute();
}

// --- incremental refresh -----------------------------------------------------------------------------------

/**
 * Re-estimates the changed records and their field-mates under the active method and recomputes the cells
 * they touch. Called inside the write transaction, after the records are written.
 */
export async function refreshRecords(trx: Transaction<Database>, recordIds: readonly string[]): Promise<void> {
	const ids = [...new Set(recordIds.map(String))];
	if (ids.length === 0) return;
	await lockRollups(trx);
	const version = await activeMethodVersion(trx);
	if (!version) return;
	await markOthersStale(trx, version);
	const startMonth = await stateFyStartMonth(trx);
	const state = await summaryState(trx, version);
	// Without a summary built on the current start month, a full rebuild is due anyway: ask for it.
	if (!state || state.state_fy_start_month !== startMonth || (state.status !== 'ready' && state.status !== 'running')) {
		await requestRebuild(trx, version);
		return;
	}
	const method = await loadMethod(trx, version);
	if (!method) return;
	await refreshFacts(trx, method, ids, startMonth, true);
}

/** Re-estimates records (with field-mates) and, when `cells`, recomputes the cells their old and new footprints touch. */
async function refreshFacts(db: Db, method: ReductionMethod, ids: readonly string[], startMonth: number, cells: boolean): Promise<number> {
	const records = await loadFactRecords(db, ids, method.version);
	const all = records.map((r) => r.id);
	const before = cells ? await footprintKeys(db, method.version, all) : [];
	await writeFacts(db, recordFacts(records, method, startMonth));
	if (cells) {
		const after = await footprintKeys(db, method.version, all);
		await recomputeCells(db, method.version, dedupeKeys([...before, ...after]));
	}
	return records.length;
}

function dedupeKeys(keys: readonly CellKey[]): CellKey[] {
	const seen = new Map<string, CellKey>();
	for (const k of keys) seen.set(`${k.district_id}|${k.fy_basis}|${k.basis}|${k.fy}`, k);
	return [...seen.values()];
}

// --- full rebuild ------------------------------------------------------------------------------------------

export interface RebuildProgress {
	phase: 'estimates' | 'cells';
	done: number;
	total: number;
}

/**
 * Rebuilds one method version's estimates and cells from all records. Marks it `running` with progress,
 * then `ready` — unless records changed meanwhile while another method was active (then it stays `stale`).
 * Returns false when the method version does not exist.
 */
export async function rebuildMethod(db: Kysely<Database>, version: string, onProgress?: (p: RebuildProgress) => void): Promise<boolean> {
	const method = await loadMethod(db, version);
	if (!method) return false;
	const startMonth = await stateFyStartMonth(db);
	const total = Number((await sql<{ n: string }>`select count(*) as n from records`.execute(db)).rows[0].n);
	await sql`
		insert into rollup_refresh (method_version, status, state_fy_start_month, phase, done, total, started_at, finished_at, error, updated_at)
		values (${version}, 'running', ${startMonth}, 'estimates', 0, ${total}, now(), null, null, now())
		on conflict (method_version) do update set status = 'running', state_fy_start_month = excluded.state_fy_start_month,
			phase = 'estimates', done = 0, total = excluded.total, started_at = now(), finished_at = null, error = null, updated_at = now()`.execute(
		db
	);
	const progress = async (phase: RebuildProgress['phase'], done: number, of: number) => {
		await db
			.updateTable('rollup_refresh')
			.set({ phase, done, total: of, updated_at: sql`now()` as unknown as Date })
			.where('method_version', '=', version)
			.execute();
		onProgress?.({ phase, done, total: of });
	};
	try {
		// Phase 1: estimates, by record-id ranges.
		let last = '0';
		let done = 0;
		for (;;) {
			const chunk = await db.selectFrom('records').select('id').where('id', '>', last).orderBy('id').limit(CHUNK).execute();
			if (chunk.length === 0) break;
			const ids = chunk.map((r) => String(r.id));
			await db.transaction().execute(async (trx) => {
				await lockRollups(trx);
				await refreshFacts(trx, method, ids, startMonth, false);
			});
			last = ids[ids.length - 1];
			done += ids.length;
			await progress('estimates', Math.min(done, total), Math.max(total, done));
		}
		// Phase 2: cells, a few districts per transaction (plus any district that only has old cells).
		const { rows } = await sql<{ district_id: number }>`
			select district_id from record_estimates where method_version = ${version}
			union select district_id from rollup_cells where method_version = ${version}
			order by 1`.execute(db);
		const districts = rows.map((r) => r.district_id);
		for (let i = 0; i < districts.length; i += DISTRICT_CHUNK) {
			const part = districts.slice(i, i + DISTRICT_CHUNK);
			await db.transaction().execute(async (trx) => {
				await lockRollups(trx);
				await recomputeDistrictCells(trx, version, part);
			});
			await progress('cells', Math.min(i + part.length, districts.length), districts.length);
		}
		await sql`
			update rollup_refresh set status = 'ready', phase = null, finished_at = now(), updated_at = now()
			where method_version = ${version} and status = 'running'`.execute(db);
		return true;
	} catch (e) {
		await db
			.updateTable('rollup_refresh')
			.set({ status: 'failed', error: e instanceof Error ? e.message : String(e), updated_at: sql`now()` as unknown as Date })
			.where('method_version', '=', version)
			.execute();
		throw e;
	}
}
