// Keeps the stored estimates (`record_estimates`) and the summary cells (`rollup_cells`) current.
//
// - `refreshRecords(trx, ids)` runs inside every write transaction that changes practice records (through
//   `afterRecordsChanged`; a batch calls it once for all its chunks): it re-estimates the changed records and
//   the records stacked on the same fields under the active method, and adds to the stored cells what
//   changed — each changed record's new contribution minus its old one (cellDeltas in rollup-cells.ts; a
//   record that counts in the same cells as before adds only the change of its amounts), so the work
//   follows the records changed, not the size of the cells they count in. Distinct-operation
//   counts move only where an operation's changed records enter or leave a cell; then the operation's
//   other records (one indexed read per refresh) say whether the operation stays. A stored cell that does
//   not agree with the deltas (a summary not kept by these writers) makes the refresh recompute the keys
//   instead. Other method versions are marked stale and rebuilt when someone asks for them.
// - `rebuildMethod(db, version)` recomputes one method version from all records, whole districts per
//   transaction, for a method just made active, a method asked for without a current summary, or a changed
//   state FY start month.
//
// Every write takes the same transaction-level advisory lock, so a batch commit and a rebuild chunk never
// interleave on the same rows. Everything is set-based (unnest arrays or json_to_recordset, one statement per
// step) and every amount is an exact integer (rollup-cells.ts), so patched cells are identical to rebuilt ones.
import { sql, type Kysely, type Transaction } from 'kysely';
import type { Database } from '../db/schema';
import { recordFacts, type FactRecord, type RecordFact } from '$lib/domain/rollup-facts';
import {
	aggregateCells,
	AMOUNTS,
	zeroAmounts,
	cellDeltas,
	operationsMoved,
	summaryKeyId,
	type CellFact,
	type CellRow,
	type OperationQuestion,
	type SummaryKey
} from '$lib/domain/rollup-cells';
import type { ReductionMethod } from '$lib/domain/reduction-method';
import { activeMethodVersion, loadMethod } from './method-source';
import { stateFyStartMonth } from './settings';
import { EFFECTIVE_WITHDRAWN_ON } from '../verification/credit';
import { carryPseudonymKey } from '../dataset/pseudonym';

type Db = Kysely<Database> | Transaction<Database>;

/** Advisory lock shared by every writer of rollup data ('RNRL'). */
export const ROLLUP_LOCK_KEY = 0x524e524c;
/** Rows per INSERT when writing estimates and cells. */
export const CHUNK = 5000;

export async function lockRollups(trx: Transaction<Database>): Promise<void> {
	await sql`select pg_advisory_xact_lock(${ROLLUP_LOCK_KEY})`.execute(trx);
	// The planner cannot see how many FYs generate_series yields per record and guesses 1,000, which makes
	// it compile these short queries with JIT (seconds) and plan tiny sorts to disk; tell it otherwise.
	await sql`set local jit = off`.execute(trx);
	await sql`set local work_mem = '64MB'`.execute(trx);
	// The rows these steps read are few and cached: index lookups, not hashes of whole tables (the default 4
	// is a spinning-disk figure; 1.1 is the usual one for SSDs and cached data).
	await sql`set local random_page_cost = 1.1`.execute(trx);
	// So the estimate rows this transaction writes carry their research-dataset pid.
	await carryPseudonymKey(trx);
}

// --- loading and writing per-record facts --------------------------------------------------------------

// withdrawn_on: the record's own withdrawal, or earlier a confirmed `not found` field visit (verification/credit.ts).
const FACT_RECORD_COLUMNS = sql`r.id::text as id, r.district_id, r.practice_code, r.county_fips, r.installed_on, r.status,
	${EFFECTIVE_WITHDRAWN_ON} as withdrawn_on,
	r.extent_acres, r.drainage_area_acres, r.field_id, r.operation_id, r.huc12, r.cost_total_usd, r.cost_share_usd,
	p.lifespan_years as catalog_lifespan_years`;

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
		select ${FACT_RECORD_COLUMNS}
		from records r join wanted w on w.id = r.id join practices p on p.code = r.practice_code
		order by r.id`.execute(db);
	return rows;
}

/** Every record of these districts (field-mates are always in the same district). */
export async function loadDistrictRecords(db: Db, districtIds: readonly number[]): Promise<FactRecord[]> {
	if (districtIds.length === 0) return [];
	const { rows } = await sql<FactRecord>`
		select ${FACT_RECORD_COLUMNS} from records r join practices p on p.code = r.practice_code
		where r.district_id = any(${[...districtIds]}::int[])`.execute(db);
	return rows;
}

function upsertFacts(part: readonly RecordFact[]) {
	const col = <T>(f: (x: RecordFact) => T): T[] => part.map(f);
	return sql`
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
			federal_fy_last = excluded.federal_fy_last, computed_at = excluded.computed_at`;
}

/** Upserts facts (no keys returned; a full rebuild recomputes whole districts). */
export async function writeFacts(db: Db, facts: readonly RecordFact[]): Promise<void> {
	for (let i = 0; i < facts.length; i += CHUNK) await upsertFacts(facts.slice(i, i + CHUNK)).execute(db);
}

/** The old and new footprints (scaled, as cells count them) of the records whose footprint a write changed. */
export interface FootprintChange {
	/** Old and new footprints of the records whose places or FYs change (new records have no old one). */
	before: CellFact[];
	after: CellFact[];
	/** Ids of those records. */
	changed: Set<string>;
	/** The records that keep their places and FYs but change amounts: new footprint, amounts new minus old. */
	reamounted: CellFact[];
}

/**
 * Upserts facts and returns what changed: for the records whose places or FYs changed, their old footprints
 * (read in the same statement, before the write) and new ones (as stored, after numeric rounding); for the
 * records whose amounts alone changed, the change of their amounts.
 */
export async function writeFactsReturningChanges(db: Db, facts: readonly RecordFact[]): Promise<FootprintChange> {
	const out: FootprintChange = { before: [], after: [], changed: new Set(), reamounted: [] };
	for (let i = 0; i < facts.length; i += CHUNK) {
		const part = facts.slice(i, i + CHUNK);
		const { rows } = await sql<CellFactRow & { side: 'old' | 'new' }>`
			with old as (
				select 'old' as side, ${CELL_FACT_COLUMNS} from record_estimates
				where method_version = ${part[0].method_version} and record_id = any(${part.map((x) => x.record_id)}::bigint[])
			),
			written as (${upsertFacts(part)} returning 'new' as side, ${CELL_FACT_COLUMNS})
			select * from old union all select * from written`.execute(db);
		const old = new Map<string, CellFact>();
		for (const r of rows) if (r.side === 'old') old.set(r.record_id, toCellFact(r));
		for (const r of rows) {
			if (r.side !== 'new') continue;
			const now = toCellFact(r);
			const was = old.get(r.record_id);
			if (was && samePlaces(was, now)) {
				if (AMOUNTS.some((k) => was[k] !== now[k])) out.reamounted.push(amountChange(was, now));
				continue;
			}
			if (was) out.before.push(was);
			out.after.push(now);
			out.changed.add(r.record_id);
		}
	}
	return out;
}

// --- summary cells ---------------------------------------------------------------------------------------

/** A summary key whose cells (every geography and practice level) are recomputed together. */
export type CellKey = SummaryKey;

/** record_estimates columns as a CellFact (amounts scaled to exact integers, see rollup-cells.ts). */
const CELL_FACT_COLUMNS = sql`record_id::text as record_id, district_id, county_fips, huc8, practice_code, operation_key,
	state_fy_installed as s_i, state_fy_first as s_f, state_fy_last as s_l,
	federal_fy_installed as f_i, federal_fy_first as f_f, federal_fy_last as f_l,
	(credited_acres * 10000)::int8::float8 as acres, (coalesce(cost_usd, 0) * 100)::int8::float8 as cost,
	(coalesce(cost_share_usd, 0) * 100)::int8::float8 as cost_share,
	(n_lb_mean * 1000000)::int8::float8 as n_mean, (n_lb_low * 1000000)::int8::float8 as n_low, (n_lb_high * 1000000)::int8::float8 as n_high,
	(p_lb_mean * 1000000)::int8::float8 as p_mean, (p_lb_low * 1000000)::int8::float8 as p_low, (p_lb_high * 1000000)::int8::float8 as p_high`;

interface CellFactRow {
	record_id: string;
	district_id: number;
	county_fips: string;
	huc8: string | null;
	practice_code: string;
	operation_key: string;
	s_i: number;
	s_f: number | null;
	s_l: number | null;
	f_i: number;
	f_f: number | null;
	f_l: number | null;
	acres: number;
	cost: number;
	cost_share: number;
	n_mean: number;
	n_low: number;
	n_high: number;
	p_mean: number;
	p_low: number;
	p_high: number;
}

const toCellFact = (r: CellFactRow): CellFact => ({
	district_id: r.district_id,
	county_fips: r.county_fips,
	huc8: r.huc8,
	practice_code: r.practice_code,
	operation_key: r.operation_key,
	state: { installed: r.s_i, first: r.s_f, last: r.s_l },
	federal: { installed: r.f_i, first: r.f_f, last: r.f_l },
	acres: r.acres,
	cost: r.cost,
	cost_share: r.cost_share,
	n_mean: r.n_mean,
	n_low: r.n_low,
	n_high: r.n_high,
	p_mean: r.p_mean,
	p_low: r.p_low,
	p_high: r.p_high
});

/** Whether two footprints count in the same cells (same places, practice, operation and FYs). */
function samePlaces(a: CellFact, b: CellFact): boolean {
	return (
		a.district_id === b.district_id &&
		a.county_fips === b.county_fips &&
		a.huc8 === b.huc8 &&
		a.practice_code === b.practice_code &&
		a.operation_key === b.operation_key &&
		a.state.installed === b.state.installed &&
		a.state.first === b.state.first &&
		a.state.last === b.state.last &&
		a.federal.installed === b.federal.installed &&
		a.federal.first === b.federal.first &&
		a.federal.last === b.federal.last
	);
}

/** The new footprint with its amounts' change (new minus old) as amounts. */
function amountChange(was: CellFact, now: CellFact): CellFact {
	const out = { ...now };
	for (const k of AMOUNTS) out[k] = now[k] - was[k];
	return out;
}

/** Facts of these districts under a method, amounts scaled to integers (see rollup-cells.ts). */
export async function loadCellFacts(db: Db, methodVersion: string, districtIds: readonly number[]): Promise<CellFact[]> {
	if (districtIds.length === 0) return [];
	const { rows } = await sql<CellFactRow>`
		select ${CELL_FACT_COLUMNS}
		from record_estimates where method_version = ${methodVersion} and district_id = any(${[...districtIds]}::int[])`.execute(db);
	return rows.map(toCellFact);
}

/**
 * The footprints (no amounts: only where they count) of every record of these operations other than
 * `except` — what decides whether a cell keeps an operation when the changed records leave it.
 */
async function loadOperationFootprints(
	db: Db,
	methodVersion: string,
	operations: readonly OperationQuestion[],
	except: ReadonlySet<string>
): Promise<CellFact[]> {
	if (operations.length === 0) return [];
	// One row per operation, its records' footprints packed in one text (far cheaper to receive than a row
	// per record): county,huc8,practice,six FYs;…  (-1 for a null FY).
	const { rows } = await sql<{ district_id: number; operation_key: string; packed: string }>`
		select e.district_id, e.operation_key, string_agg(concat_ws(',', e.county_fips, coalesce(e.huc8, ''), e.practice_code,
			e.state_fy_installed, coalesce(e.state_fy_first, -1), coalesce(e.state_fy_last, -1),
			e.federal_fy_installed, coalesce(e.federal_fy_first, -1), coalesce(e.federal_fy_last, -1)), ';') as packed
		from unnest(${operations.map((o) => o.district_id)}::int[], ${operations.map((o) => o.operation_key)}::text[]) as q(district_id, operation_key)
		join record_estimates e on e.method_version = ${methodVersion} and e.district_id = q.district_id and e.operation_key = q.operation_key
		where not exists (select 1 from unnest(${[...except]}::bigint[]) as x(id) where x.id = e.record_id)
		group by e.district_id, e.operation_key`.execute(db);
	const out: CellFact[] = [];
	const fy = (x: string) => (x === '-1' ? null : Number(x));
	for (const r of rows) {
		for (const one of r.packed.split(';')) {
			const [county_fips, huc8, practice_code, si, sf, sl, fi, ff, fl] = one.split(',');
			out.push({
				district_id: r.district_id,
				county_fips,
				huc8: huc8 === '' ? null : huc8,
				practice_code,
				operation_key: r.operation_key,
				state: { installed: Number(si), first: fy(sf), last: fy(sl) },
				federal: { installed: Number(fi), first: fy(ff), last: fy(fl) },
				...zeroAmounts()
			});
		}
	}
	return out;
}

/**
 * The stored cells' amount columns (in the order of the table and of AMOUNTS), the integer amount each holds
 * (rollup-cells.ts) and how many of those make one of the column's unit. Turning an integer back is a
 * multiplication by the unit's fraction (0.0001 acre…), exact and with a fixed scale, so a cell written by
 * a full build and one patched by deltas are stored identically.
 */
const STORED_AMOUNTS = [
	['credited_acres', 'acres', 10_000],
	['cost_usd', 'cost', 100],
	['cost_share_usd', 'cost_share', 100],
	['n_lb_mean', 'n_mean', 1_000_000],
	['n_lb_low', 'n_low', 1_000_000],
	['n_lb_high', 'n_high', 1_000_000],
	['p_lb_mean', 'p_mean', 1_000_000],
	['p_lb_low', 'p_low', 1_000_000],
	['p_lb_high', 'p_high', 1_000_000]
] as const;

/** 1/per as an exact numeric literal (10,000 → 0.0001). */
const unitOf = (per: number) => sql.raw((1 / per).toFixed(Math.log10(per)));

/** Cells as rows of rollup_cells (integer amounts turned back into dollars, acres and pounds). */
function cellValues(methodVersion: string, part: readonly CellRow[]) {
	const col = <T>(f: (c: CellRow) => T): T[] => part.map(f);
	return sql`
		select ${methodVersion}, u.fy_basis, u.basis, u.geo_level, u.fy, u.district_id, u.geo, u.practice_code, u.practices, u.operations,
			${sql.join(STORED_AMOUNTS.map(([, amount, per]) => sql`u.${sql.ref(amount)} * ${unitOf(per)}`))}
		from unnest(${col((c) => c.fy_basis)}::text[], ${col((c) => c.basis)}::text[], ${col((c) => c.geo_level)}::text[],
			${col((c) => c.fy)}::int[], ${col((c) => c.district_id)}::int[], ${col((c) => c.geo)}::text[], ${col((c) => c.practice_code)}::text[],
			${col((c) => c.practices)}::int[], ${col((c) => c.operations)}::int[], ${col((c) => c.acres)}::int8[], ${col((c) => c.cost)}::int8[],
			${col((c) => c.cost_share)}::int8[], ${col((c) => c.n_mean)}::int8[], ${col((c) => c.n_low)}::int8[], ${col((c) => c.n_high)}::int8[],
			${col((c) => c.p_mean)}::int8[], ${col((c) => c.p_low)}::int8[], ${col((c) => c.p_high)}::int8[])
			as u(fy_basis, basis, geo_level, fy, district_id, geo, practice_code, practices, operations, acres, cost, cost_share,
				n_mean, n_low, n_high, p_mean, p_low, p_high)`;
}

const CELL_COLUMNS = sql`method_version, fy_basis, basis, geo_level, fy, district_id, geo, practice_code, practices, operations,
	credited_acres, cost_usd, cost_share_usd, n_lb_mean, n_lb_low, n_lb_high, p_lb_mean, p_lb_low, p_lb_high`;

/** Writes cells. */
async function insertCells(db: Db, methodVersion: string, cells: readonly CellRow[]): Promise<void> {
	for (let i = 0; i < cells.length; i += CHUNK)
		await sql`insert into rollup_cells (${CELL_COLUMNS}) ${cellValues(methodVersion, cells.slice(i, i + CHUNK))}`.execute(db);
}

/** Recomputes the cells of these keys from the stored facts of their districts (delete, then insert). */
export async function recomputeCells(db: Db, methodVersion: string, keys: readonly CellKey[]): Promise<void> {
	if (keys.length === 0) return;
	const d = keys.map((k) => k.district_id);
	await sql`
		delete from rollup_cells c
		using unnest(${d}::int[], ${keys.map((k) => k.fy_basis)}::text[], ${keys.map((k) => k.basis)}::text[], ${keys.map((k) => k.fy)}::int[])
			as a(district_id, fy_basis, basis, fy)
		where c.method_version = ${methodVersion} and c.district_id = a.district_id and c.fy_basis = a.fy_basis
			and c.basis = a.basis and c.fy = a.fy`.execute(db);
	const facts = await loadCellFacts(db, methodVersion, [...new Set(d)]);
	await insertCells(db, methodVersion, aggregateCells(facts, new Set(keys.map(summaryKeyId))));
}

/** The key of rollup_cells (also the order of its primary-key index). */
const CELL_KEY = ['fy_basis', 'basis', 'geo_level', 'practice_code', 'fy', 'district_id', 'geo'] as const;

/**
 * Adds deltas to the stored cells in place, one upsert per chunk: a cell that exists gets the delta added
 * (every amount is an exact multiple of its column's unit at that unit's scale, so the numeric sum is exact
 * and stored just as a full build stores it); a cell that does not exist yet is inserted with the delta. Only
 * columns outside the indexes change, so PostgreSQL can update in place (HOT; the table leaves room on its
 * pages for it). Cells no record counts in any more are then deleted. Returns false when a cell does not
 * agree with the deltas — a summary not maintained by these writers — and the caller recomputes the summary
 * keys of the deltas (which cover every cell touched, so whatever this wrote is rewritten in the same
 * transaction).
 */
async function applyCellDeltas(db: Db, methodVersion: string, deltas: readonly CellRow[]): Promise<boolean> {
	// Both sides hold exact multiples of the column's unit at its scale (see STORED_AMOUNTS), so their plain
	// numeric sum is the exact amount with that same scale: what a full build writes.
	const sums = STORED_AMOUNTS.map(([column]) => sql`${sql.ref(column)} = c.${sql.ref(column)} + excluded.${sql.ref(column)}`);
	type Written = Pick<CellRow, (typeof CELL_KEY)[number] | 'practices' | 'operations'> & { empty: boolean };
	const emptied: Written[] = [];
	for (let i = 0; i < deltas.length; i += CHUNK) {
		// Only the cells that need a look come back: a cell with practices and operations is as it should be.
		const { rows } = await sql<Written>`
			with written as (
				insert into rollup_cells as c (${CELL_COLUMNS}) ${cellValues(methodVersion, deltas.slice(i, i + CHUNK))}
				on conflict (method_version, ${sql.join(CELL_KEY.map((k) => sql.ref(k)))}) do update
				set practices = c.practices + excluded.practices, operations = c.operations + excluded.operations, ${sql.join(sums)}
				returning c.fy_basis, c.basis, c.geo_level, c.practice_code, c.fy, c.district_id, c.geo, c.practices, c.operations, (${sql.join(
					STORED_AMOUNTS.map(([column]) => sql`c.${sql.ref(column)} = 0`),
					sql` and `
				)}) as empty
			)
			select * from written where practices <= 0 or operations <= 0`.execute(db);
		for (const r of rows) {
			if (r.practices < 0 || r.operations < 0 || (r.practices === 0) !== (r.operations === 0)) return false;
			if (r.practices === 0) {
				if (!r.empty) return false;
				emptied.push(r);
			}
		}
	}
	if (emptied.length > 0) {
		const col = <T>(f: (c: Written) => T): T[] => emptied.map(f);
		await sql`
			delete from rollup_cells c
			using unnest(${col((c) => c.fy_basis)}::text[], ${col((c) => c.basis)}::text[], ${col((c) => c.geo_level)}::text[],
				${col((c) => c.practice_code)}::text[], ${col((c) => c.fy)}::int[], ${col((c) => c.district_id)}::int[], ${col((c) => c.geo)}::text[])
				as k(fy_basis, basis, geo_level, practice_code, fy, district_id, geo)
			where c.method_version = ${methodVersion} and ${sql.join(
				CELL_KEY.map((key) => sql`c.${sql.ref(key)} = k.${sql.ref(key)}`),
				sql` and `
			)}`.execute(db);
	}
	return true;
}

/** Recomputes every cell of these districts (used by a full rebuild). */
export async function recomputeDistrictCells(db: Db, methodVersion: string, districtIds: readonly number[]): Promise<void> {
	if (districtIds.length === 0) return;
	await sql`delete from rollup_cells where method_version = ${methodVersion} and district_id = any(${[...districtIds]}::int[])`.execute(db);
	await insertCells(db, methodVersion, aggregateCells(await loadCellFacts(db, methodVersion, districtIds)));
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
 * Time this process has spent in refreshRecords (read by the rollups benchmark; a few clock reads a call), and
 * its two parts: `estimatesMs` re-estimating the records and writing their estimates (reading the old ones in
 * the same statement), `summaryMs` bringing the summary cells up to date from the old and new estimates.
 */
export const refreshClock = { ms: 0, calls: 0, estimatesMs: 0, summaryMs: 0 };

/**
 * Re-estimates the changed records and their field-mates under the active method and recomputes the cells
 * they touch. Called inside the write transaction, after the records are written.
 */
export async function refreshRecords(trx: Transaction<Database>, recordIds: readonly string[]): Promise<void> {
	const started = performance.now();
	try {
		await refreshRecordsNow(trx, recordIds);
	} finally {
		refreshClock.ms += performance.now() - started;
		refreshClock.calls++;
	}
}

async function refreshRecordsNow(trx: Transaction<Database>, recordIds: readonly string[]): Promise<void> {
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

/** Re-estimates records (with field-mates) and, when `cells`, brings the cells they count in up to date. */
async function refreshFacts(db: Db, method: ReductionMethod, ids: readonly string[], startMonth: number, cells: boolean): Promise<number> {
	const started = performance.now();
	const records = await loadFactRecords(db, ids, method.version);
	const facts = recordFacts(records, method, startMonth);
	if (!cells) {
		await writeFacts(db, facts);
		return records.length;
	}
	// Only records whose footprint or amounts changed move the cells: subtract their old contributions,
	// add their new ones; distinct-operation counts look at the other records of the operations concerned.
	const change = await writeFactsReturningChanges(db, facts);
	const summaryStarted = performance.now();
	refreshClock.estimatesMs += summaryStarted - started;
	// The operations' other records are read while the deltas are worked out: operationsMoved is a cheap
	// superset of the operations cellDeltas asks about (any it missed would be read after).
	const moved = operationsMoved(change.before, change.after);
	const reading = loadOperationFootprints(db, method.version, moved, change.changed);
	reading.catch(() => {}); // awaited below; this only keeps a failure from counting as unhandled meanwhile
	const pending = cellDeltas(change.before, change.after, change.reamounted);
	const read = new Set(moved.map((o) => `${o.district_id}|${o.operation_key}`));
	const missed = pending.operations.filter((o) => !read.has(`${o.district_id}|${o.operation_key}`));
	const others = [...(await reading), ...(await loadOperationFootprints(db, method.version, missed, change.changed))];
	const deltas = pending.finish(others);
	if (!(await applyCellDeltas(db, method.version, deltas))) await recomputeCells(db, method.version, dedupeKeys(deltas));
	refreshClock.summaryMs += performance.now() - summaryStarted;
	return records.length;
}

function dedupeKeys(keys: readonly CellKey[]): CellKey[] {
	const seen = new Map<string, CellKey>();
	for (const k of keys) seen.set(summaryKeyId(k), { district_id: k.district_id, fy_basis: k.fy_basis, basis: k.basis, fy: k.fy });
	return [...seen.values()];
}

// --- full rebuild ------------------------------------------------------------------------------------------

export interface RebuildProgress {
	/** Records re-estimated so far, with their districts' cells. */
	done: number;
	total: number;
}

async function rebuildDistrictsWith(db: Kysely<Database>, method: ReductionMethod, startMonth: number, districtIds: number[]) {
	await db.transaction().execute(async (trx) => {
		await lockRollups(trx);
		await writeFacts(trx, recordFacts(await loadDistrictRecords(trx, districtIds), method, startMonth));
		await recomputeDistrictCells(trx, method.version, districtIds);
	});
}

/**
 * Rebuilds these districts' estimates and cells from their records, in one transaction — what a full
 * rebuild does for each group of districts (a district's records and cells depend on nothing outside it).
 */
export async function rebuildDistricts(db: Kysely<Database>, version: string, districtIds: number[]): Promise<boolean> {
	const method = await loadMethod(db, version);
	if (!method) return false;
	await rebuildDistrictsWith(db, method, await stateFyStartMonth(db), districtIds);
	return true;
}

/** Records per rebuild transaction (whole districts are kept together). */
const REBUILD_RECORDS = 25_000;

/**
 * Rebuilds one method version's estimates and cells from all records, a few whole districts per transaction
 * (estimates, then those districts' cells, atomically). Marks it `running` with progress, then `ready` —
 * unless records changed meanwhile while another method was active (then it stays `stale`).
 * Returns false when the method version does not exist.
 */
export async function rebuildMethod(db: Kysely<Database>, version: string, onProgress?: (p: RebuildProgress) => void): Promise<boolean> {
	const method = await loadMethod(db, version);
	if (!method) return false;
	const startMonth = await stateFyStartMonth(db);
	const { rows: sizes } = await sql<{ district_id: number; n: number }>`
		select district_id, sum(n)::int as n from (
			select district_id, count(*) as n from records group by district_id
			union all select district_id, 0 from rollup_cells where method_version = ${version} group by district_id
		) t group by district_id order by district_id`.execute(db);
	const total = sizes.reduce((a, d) => a + d.n, 0);
	await sql`
		insert into rollup_refresh (method_version, status, state_fy_start_month, phase, done, total, started_at, finished_at, error, updated_at)
		values (${version}, 'running', ${startMonth}, 'records', 0, ${total}, now(), null, null, now())
		on conflict (method_version) do update set status = 'running', state_fy_start_month = excluded.state_fy_start_month,
			phase = 'records', done = 0, total = excluded.total, started_at = now(), finished_at = null, error = null, updated_at = now()`.execute(db);
	try {
		let done = 0;
		for (let i = 0; i < sizes.length;) {
			const part: number[] = [];
			let n = 0;
			while (i < sizes.length && (part.length === 0 || n + sizes[i].n <= REBUILD_RECORDS)) {
				part.push(sizes[i].district_id);
				n += sizes[i].n;
				i++;
			}
			await rebuildDistrictsWith(db, method, startMonth, part);
			done += n;
			await db
				.updateTable('rollup_refresh')
				.set({ done, updated_at: sql`now()` as unknown as Date })
				.where('method_version', '=', version)
				.execute();
			onProgress?.({ done, total });
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
