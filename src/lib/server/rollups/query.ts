// Answers a rollup request from the stored summary cells — never from the records. Picks the summary
// level that matches the grouping and filters (county / HUC-8 / district × practice or all practices),
// sums over districts where the grouping has no district (exact for every measure: operation ids are
// district-scoped), applies the caller's district scope, and for researchers the small-cell rule.
import { sql, type Kysely, type RawBuilder } from 'kysely';
import type { Database } from '../db/schema';
import type { Principal } from '../auth/principal';
import { ApiError } from '../http/problem';
import { fiscalYear } from '$lib/domain/fiscal-year';
import { DEFAULT_METHOD, type ReductionMethod } from '$lib/domain/reduction-method';
import { applySmallCellRule, type BaseCell, type SmallCellCounts } from '$lib/domain/small-cell-rule';
import {
	DEFAULT_FY_SPAN,
	type Grouping,
	type RollupCell,
	type RollupGroupingResult,
	type RollupPending,
	type RollupQuery,
	type RollupResponse,
	type RollupTotal
} from '$lib/schema/rollups';
import { activeMethodVersion, loadMethod } from './method-source';
import { isCurrent, requestRebuild, summaryState } from './refresh';
import { SETTING_KEYS, smallCellKOf, stateFyStartMonthOf } from './settings';

export type RollupOutcome = { kind: 'ready'; answer: RollupAnswer; method: ReductionMethod } | { kind: 'pending'; pending: RollupPending };

interface Lookups {
	counties: Map<string, string>;
	practices: Map<string, string>;
	districts: Map<number, { code: string; name: string; region: string }>;
}

type RefreshRow = Awaited<ReturnType<typeof summaryState>>;

/**
 * Everything a rollup request needs besides the cells, in one statement (one round trip): the settings it
 * reads, every method's summary state, and the names of counties (hub state), practices and districts.
 */
async function readContext(db: Kysely<Database>) {
	const keys = [SETTING_KEYS.stateFyStartMonth, SETTING_KEYS.smallCellK, SETTING_KEYS.hubStateFips, SETTING_KEYS.activeMethod];
	const { rows } = await sql<{
		settings: Record<string, unknown> | null;
		states: Array<NonNullable<RefreshRow>> | null;
		counties: [string, string][] | null;
		practices: [string, string][] | null;
		districts: [number, string, string, string][] | null;
	}>`
		select
			(select json_object_agg(key, value) from settings where key = any(${keys}::text[])) as settings,
			(select json_agg(r) from rollup_refresh r) as states,
			(select json_agg(json_build_array(fips, name)) from counties
				where state_fips = coalesce((select lpad(value #>> '{}', 2, '0') from settings where key = ${SETTING_KEYS.hubStateFips}), '19')::char(2)) as counties,
			(select json_agg(json_build_array(code, name)) from practices) as practices,
			(select json_agg(json_build_array(id, code, name, region)) from districts) as districts`.execute(db);
	const r = rows[0];
	const settings = new Map(Object.entries(r.settings ?? {}));
	const names: Lookups = {
		counties: new Map(r.counties ?? []),
		practices: new Map(r.practices ?? []),
		districts: new Map((r.districts ?? []).map(([id, code, name, region]) => [id, { code, name, region }]))
	};
	const states = (r.states ?? []).map((x) => ({ ...x, finished_at: x.finished_at ? new Date(x.finished_at) : null }));
	return { settings, states, names };
}

/** Resolves a district filter (code or id) to an id; 404 when unknown. */
async function resolveDistrict(db: Kysely<Database>, text: string): Promise<number> {
	const row = /^[0-9]+$/.test(text)
		? await db.selectFrom('districts').select('id').where('id', '=', Number(text)).executeTakeFirst()
		: await db
				.selectFrom('districts')
				.select('id')
				.where(sql`lower(code)`, '=', text.toLowerCase())
				.executeTakeFirst();
	if (!row)
		throw new ApiError({
			status: 404,
			type: 'unknown-district',
			detail: `No district ${text}.`,
			errors: [{ pointer: '#/query/district', detail: 'Unknown district.' }]
		});
	return row.id;
}

/** The last DEFAULT_FY_SPAN fiscal years, ending with the current one on the asked FY basis. */
export function defaultFyRange(fyBasis: 'state' | 'federal', startMonth: number, today = new Date()): { from: number; to: number } {
	const to = fiscalYear(today.toISOString().slice(0, 10), fyBasis, startMonth);
	return { from: to - DEFAULT_FY_SPAN + 1, to };
}

const MEASURES = sql`
	sum(practices)::int as practices, sum(operations)::int as operations,
	round(sum(credited_acres), 2) as credited_acres, round(sum(cost_usd), 2) as cost_usd, round(sum(cost_share_usd), 2) as cost_share_usd,
	round(sum(n_lb_mean), 1) as n_lb_yr_mean, round(sum(n_lb_low), 1) as n_lb_yr_low, round(sum(n_lb_high), 1) as n_lb_yr_high,
	round(sum(p_lb_mean), 1) as p_lb_yr_mean, round(sum(p_lb_low), 1) as p_lb_yr_low, round(sum(p_lb_high), 1) as p_lb_yr_high,
	round(sum(cost_usd) / nullif(sum(n_lb_mean), 0), 2) as usd_per_lb_n`;

type MeasureRow = {
	practices: number;
	operations: number | null;
	credited_acres: string;
	cost_usd: string;
	cost_share_usd: string;
	n_lb_yr_mean: string;
	n_lb_yr_low: string;
	n_lb_yr_high: string;
	p_lb_yr_mean: string;
	p_lb_yr_low: string;
	p_lb_yr_high: string;
	usd_per_lb_n: string | null;
};

/** A totals row or the start of a cell: its FY and measures as numbers, in one object of one shape. */
function measures(r: MeasureRow & { fy: unknown }) {
	return {
		fy: Number(r.fy),
		practices: Number(r.practices),
		operations: r.operations === null ? null : Number(r.operations),
		credited_acres: Number(r.credited_acres),
		cost_usd: Number(r.cost_usd),
		cost_share_usd: Number(r.cost_share_usd),
		n_lb_yr_mean: Number(r.n_lb_yr_mean),
		n_lb_yr_low: Number(r.n_lb_yr_low),
		n_lb_yr_high: Number(r.n_lb_yr_high),
		p_lb_yr_mean: Number(r.p_lb_yr_mean),
		p_lb_yr_low: Number(r.p_lb_yr_low),
		p_lb_yr_high: Number(r.p_lb_yr_high),
		usd_per_lb_n: r.usd_per_lb_n === null ? null : Number(r.usd_per_lb_n)
	};
}

const orNull = (x: string | number | null) => x ?? 'null';

/**
 * A cell's FY and measures as JSON text, the numbers written as PostgreSQL printed them (already rounded by
 * the read) instead of parsed to doubles and printed again: the values of `measures`, in less time.
 */
function measuresJson(r: MeasureRow & { fy: unknown }): string {
	return (
		`"fy":${Number(r.fy)},"practices":${Number(r.practices)},"operations":${orNull(r.operations)},` +
		`"credited_acres":${r.credited_acres},"cost_usd":${r.cost_usd},"cost_share_usd":${r.cost_share_usd},` +
		`"n_lb_yr_mean":${r.n_lb_yr_mean},"n_lb_yr_low":${r.n_lb_yr_low},"n_lb_yr_high":${r.n_lb_yr_high},` +
		`"p_lb_yr_mean":${r.p_lb_yr_mean},"p_lb_yr_low":${r.p_lb_yr_low},"p_lb_yr_high":${r.p_lb_yr_high},` +
		`"usd_per_lb_n":${orNull(r.usd_per_lb_n)}`
	);
}

type CellRow = MeasureRow & { fy: number } & Record<string, unknown>;

/** One grouping as read from the summary: its rows, and the labels (names, codes) each cell carries. */
export interface GroupingRows {
	group: RollupGroupingResult['group'];
	rows: CellRow[];
	labels: (r: CellRow) => Partial<RollupCell>;
	totals: RollupTotal[];
}

/**
 * A rollup's answer, kept as the summary rows it was read from until it is asked for: as objects (CSV and
 * XLSX exports) or as JSON text (the API's JSON, written without making the cell objects first).
 */
export class RollupAnswer {
	constructor(
		private readonly head: Omit<RollupResponse, 'groupings'>,
		private readonly groupings: Array<GroupingRows | RollupGroupingResult>
	) {}

	response(): RollupResponse {
		const groupings = this.groupings.map((g) =>
			'rows' in g ? { group: g.group, cells: g.rows.map((r) => ({ ...measures(r), ...g.labels(r) })), totals: g.totals } : g
		);
		return { ...this.head, groupings };
	}

	json(): string {
		const parts = this.groupings.map((g) => {
			if (!('rows' in g)) return JSON.stringify(g);
			// A cell's labels depend only on its keys, which repeat from FY to FY: each is encoded once.
			const labelsJson = new Map<string, string>();
			let cells = '';
			for (const r of g.rows) {
				const key = `${r.district_id}|${r.geo}|${r.practice_code}`;
				let labels = labelsJson.get(key);
				if (labels === undefined) {
					labels = JSON.stringify(g.labels(r));
					labels = labels.length > 2 ? `,${labels.slice(1)}` : '}';
					labelsJson.set(key, labels);
				}
				cells += `${cells ? ',' : ''}{${measuresJson(r)}${labels}`;
			}
			return `{"group":${JSON.stringify(g.group)},"cells":[${cells}],"totals":${JSON.stringify(g.totals)}}`;
		});
		return `${JSON.stringify(this.head).slice(0, -1)},"groupings":[${parts.join(',')}]}`;
	}
}

export interface CellSource {
	methodVersion: string;
	/** Instead of `methodVersion`: SQL giving the method version (the active one, read in the same statement). */
	methodSql?: RawBuilder<string>;
	fyBasis: 'state' | 'federal';
	basis: 'installed' | 'in_service';
	fy: { from: number; to: number };
	districtId: number | null;
	county: string | null;
	practice: string | null;
}

/** The summary level a grouping reads: geography and practice level chosen so no cell is summed across them. */
export function sourceLevel(
	g: Grouping,
	src: Pick<CellSource, 'county' | 'practice'>
): { geoLevel: 'county' | 'huc8' | 'district'; byPractice: boolean } {
	const geoLevel = g.dims.includes('county') || src.county ? 'county' : g.dims.includes('huc8') ? 'huc8' : 'district';
	return { geoLevel, byPractice: g.dims.includes('practice') || !!src.practice };
}

function where(src: CellSource, geoLevel: string, byPractice: boolean): RawBuilder<unknown> {
	const parts = [
		src.methodSql ? sql`method_version = ${src.methodSql}` : sql`method_version = ${src.methodVersion}`,
		sql`fy_basis = ${src.fyBasis}`,
		sql`basis = ${src.basis}`,
		sql`geo_level = ${geoLevel}`,
		sql`fy between ${src.fy.from} and ${src.fy.to}`,
		src.practice ? sql`practice_code = ${src.practice}` : byPractice ? sql`practice_code <> '*'` : sql`practice_code = '*'`
	];
	if (src.districtId !== null) parts.push(sql`district_id = ${src.districtId}`);
	if (src.county && geoLevel === 'county') parts.push(sql`geo = ${src.county}`);
	return sql.join(parts, sql` and `);
}

/** The SQL a grouping reads (exported so the benchmark can time the bare summary read). */
export function groupingSql(g: Grouping, src: CellSource): RawBuilder<CellRow> {
	const { geoLevel, byPractice } = sourceLevel(g, src);
	const keys: RawBuilder<unknown>[] = [sql`fy`];
	if (g.dims.includes('district')) keys.push(sql`district_id`);
	if (g.dims.includes('county') || g.dims.includes('huc8')) keys.push(sql`geo`);
	if (g.dims.includes('practice')) keys.push(sql`practice_code`);
	const keyList = sql.join(keys);
	return sql<CellRow>`
		select ${keyList}, ${MEASURES} from rollup_cells where ${where(src, geoLevel, byPractice)}
		group by ${keyList} order by ${keyList}`;
}

/** Totals per FY, read from the level that covers everything the grouping's cells cover. */
export function totalsSql(src: CellSource): RawBuilder<MeasureRow & { fy: number; method_version?: string }> {
	const geoLevel = src.county ? 'county' : 'district';
	// With `methodSql`, each row also says which method version the statement read.
	const version = src.methodSql ? sql`, ${src.methodSql} as method_version` : sql``;
	return sql<MeasureRow & { fy: number; method_version?: string }>`
		select fy, ${MEASURES}${version} from rollup_cells where ${where(src, geoLevel, !!src.practice)} group by fy order by fy`;
}

/** The active method version as SQL, read the way getActiveMethodVersion reads it (methods.ts). */
const ACTIVE_METHOD_SQL = sql<string>`coalesce((select value #>> '{}' from settings
	where key = ${SETTING_KEYS.activeMethod} and jsonb_typeof(value) = 'string'), ${DEFAULT_METHOD.version})`;

/** The totals and every grouping of a request: independent reads of the summary, run side by side. */
function readCells(db: Kysely<Database>, src: CellSource, groupings: readonly Grouping[]) {
	return Promise.all([totalsSql(src).execute(db), ...groupings.map((g) => groupingSql(g, src).execute(db))]);
}

function notesFor(method: ReductionMethod, q: RollupQuery, startMonth: number, researcher: boolean, k: number): string[] {
	const fyText =
		q.fy_basis === 'federal'
			? 'Fiscal years are federal: October 1 – September 30, named for the year in which they end (31 U.S.C. §1102).'
			: `Fiscal years are the state's, starting in month ${startMonth} and named for the calendar year in which they end.`;
	const notes = [
		'These are estimates from a reduction method (efficiency × baseline loss × credited acres), not measured loads.',
		fyText,
		q.basis === 'in_service'
			? 'In-service basis: a practice counts in every FY from its installation until its lifespan runs out or it is withdrawn, so sums across FYs count practice-years.'
			: 'Installed basis: a practice counts only in the FY it was installed.',
		'Estimates do not change from one FY to the next: practices stacked on a field are combined over the record’s life, and a withdrawn practice keeps the estimate it had while in service.',
		'Records without an operation id count as one operation per district (the cautious reading for privacy).',
		'Costs not reported count as $0; dollars per lb N divide the total cost by the mean N reduction per year (not annualised).',
		...method.notes
	];
	if (researcher) {
		notes.push(
			`Small-cell rule: a county × FY × practice cell with fewer than ${k} distinct operations is generalised to its district's region, then to the state, or suppressed. Suppressed cells are left out of every row and total; totals give no operation count.`
		);
	}
	return notes;
}

/**
 * Runs a rollup for a principal. Returns `pending` (with progress) while the asked method's summary is
 * being built, having asked for that build.
 */
export async function runRollup(db: Kysely<Database>, principal: Principal, q: RollupQuery): Promise<RollupOutcome> {
	const researcher = principal.role === 'researcher';
	// Scope rules that need no database first: researchers see no districts and one grouping.
	if (researcher) {
		const errors = [];
		if (q.district !== null)
			errors.push({ pointer: '#/query/district', detail: 'Researchers see county, regional and state aggregates, not districts.' });
		if (q.groupings.some((g) => g.dims.join() !== 'fy,county,practice')) {
			errors.push({
				pointer: '#/query/group',
				detail: 'Researchers get the county,fy,practice grouping, with the small-cell rule applied.'
			});
		}
		if (errors.length)
			throw new ApiError({ status: 400, type: 'invalid-query', detail: 'This grouping or filter is not open to researchers.', errors });
	}
	if (principal.role === 'district' && principal.districtId === null) {
		throw new ApiError({ status: 403, detail: 'This district account is not bound to a district.' });
	}

	// When the cells depend on nothing the context decides (FY range given, no district to look up), they are
	// read alongside it — one round of parallel statements instead of two in a row — and used only if the
	// context then allows the answer and the statement read the method version the context names.
	const early =
		!researcher && q.fy !== null && q.district === null
			? readCells(
					db,
					{
						methodVersion: q.method ?? '',
						methodSql: q.method ? undefined : ACTIVE_METHOD_SQL,
						fyBasis: q.fy_basis,
						basis: q.basis,
						fy: q.fy,
						districtId: principal.role === 'district' ? principal.districtId : null,
						county: q.county,
						practice: q.practice
					},
					q.groupings
				)
			: null;
	early?.catch(() => {}); // observed here; awaited (or dropped) below
	// One round trip for settings, summary states and names; the asked district alongside.
	const [{ settings, states, names }, asked] = await Promise.all([
		readContext(db),
		q.district !== null ? resolveDistrict(db, q.district) : Promise.resolve(null)
	]);
	const active = settings.get(SETTING_KEYS.activeMethod);
	const version = q.method ?? (typeof active === 'string' ? active : await activeMethodVersion(db));
	if (!version) throw new ApiError({ status: 404, type: 'no-method', detail: 'No reduction method has been set up yet.' });
	const startMonth = stateFyStartMonthOf(settings.get(SETTING_KEYS.stateFyStartMonth));
	const k = smallCellKOf(settings.get(SETTING_KEYS.smallCellK));
	const state = states.find((x) => x.method_version === version);
	const method = await loadMethod(db, version);
	if (!method) {
		throw new ApiError({
			status: 404,
			type: 'unknown-method',
			detail: `No reduction method version ${version}.`,
			errors: [{ pointer: '#/query/method', detail: 'Unknown method version.' }]
		});
	}
	// A district account sees its own district; asking for another is refused.
	let districtId: number | null = asked;
	if (principal.role === 'district') {
		if (asked !== null && asked !== principal.districtId) {
			throw new ApiError({ status: 403, type: 'other-district', detail: 'A district account sees its own district only.' });
		}
		districtId = principal.districtId;
	}

	if (!isCurrent(state, startMonth)) {
		await requestRebuild(db, version);
		const now = await summaryState(db, version);
		return {
			kind: 'pending',
			pending: {
				status: now?.status === 'running' ? 'running' : 'pending',
				method_version: version,
				phase: now?.phase ?? null,
				done: now?.done ?? 0,
				total: now?.total ?? 0,
				detail: `The summary for method ${version} is being built from the records; ask again shortly.`
			}
		};
	}

	const fy = q.fy ?? defaultFyRange(q.fy_basis, startMonth);
	const src: CellSource = {
		methodVersion: version,
		fyBasis: q.fy_basis,
		basis: q.basis,
		fy,
		districtId,
		county: q.county,
		practice: q.practice
	};
	let smallCells: SmallCellCounts | null = null;
	const groupings: Array<GroupingRows | RollupGroupingResult> = [];

	if (researcher) {
		const r = await researcherCells(db, src, k, names);
		smallCells = r.counts;
		groupings.push({ group: ['county', 'fy', 'practice'], cells: r.cells, totals: r.totals });
	} else {
		let read = early ? await early : null;
		// Read again when the early statements saw another method version (switched in between) or no cells.
		if (!read || read[0].rows.length === 0 || (!q.method && read[0].rows[0].method_version !== version))
			read = await readCells(db, src, q.groupings);
		const [totalRows, ...perGrouping] = read;
		const totals = totalRows.rows.map(measures);
		for (const [gi, g] of q.groupings.entries()) {
			const { geoLevel } = sourceLevel(g, src);
			const byDistrict = g.dims.includes('district');
			const byCounty = g.dims.includes('county') && geoLevel === 'county';
			const byHuc8 = g.dims.includes('huc8');
			const byPractice = g.dims.includes('practice');
			const labels = (r: CellRow): Partial<RollupCell> => {
				const cell: Partial<RollupCell> = {};
				if (byDistrict) {
					const d = names.districts.get(Number(r.district_id));
					cell.district_id = Number(r.district_id);
					cell.district_code = d?.code ?? String(r.district_id);
					cell.district_name = d?.name ?? '';
				}
				if (byCounty) {
					cell.county_fips = String(r.geo);
					cell.county_name = names.counties.get(String(r.geo)) ?? null;
				}
				if (byHuc8) cell.huc8 = r.geo === '' ? null : String(r.geo);
				if (byPractice) {
					cell.practice_code = String(r.practice_code);
					cell.practice_name = names.practices.get(String(r.practice_code)) ?? '';
				}
				return cell;
			};
			groupings.push({ group: g.dims, rows: perGrouping[gi].rows, labels, totals });
		}
	}

	return {
		kind: 'ready',
		method,
		answer: new RollupAnswer(
			{
				method_version: version,
				fy_basis: q.fy_basis,
				state_fy_start_month: startMonth,
				basis: q.basis,
				fy,
				filters: {
					district: districtId === null ? null : (names.districts.get(districtId)?.code ?? String(districtId)),
					county: q.county,
					practice: q.practice
				},
				refreshed_at: state?.finished_at ? new Date(state.finished_at).toISOString() : null,
				small_cells: smallCells,
				notes: notesFor(method, q, startMonth, researcher, k)
			},
			groupings
		)
	};
}

// --- researchers: county × FY × practice with the small-cell rule ----------------------------------------

const round = (x: number, d: number) => {
	const f = 10 ** d;
	return Math.round((x + Math.sign(x) * Number.EPSILON * Math.abs(x)) * f) / f;
};

async function researcherCells(db: Kysely<Database>, src: CellSource, k: number, names: Lookups) {
	// Base cells over the whole state (the rule never depends on the county filter, so filtered and
	// unfiltered answers publish the same rows).
	const base = (
		await sql<{
			fy: number;
			county_fips: string;
			practice_code: string;
			region: string;
			operations: number;
			practices: number;
			credited_acres: string;
			cost_usd: string;
			cost_share_usd: string;
			n_lb_mean: string;
			n_lb_low: string;
			n_lb_high: string;
			p_lb_mean: string;
			p_lb_low: string;
			p_lb_high: string;
		}>`
			select c.fy, c.geo as county_fips, c.practice_code, min(d.region) as region,
				sum(c.operations)::int as operations, sum(c.practices)::int as practices,
				sum(c.credited_acres) as credited_acres, sum(c.cost_usd) as cost_usd, sum(c.cost_share_usd) as cost_share_usd,
				sum(c.n_lb_mean) as n_lb_mean, sum(c.n_lb_low) as n_lb_low, sum(c.n_lb_high) as n_lb_high,
				sum(c.p_lb_mean) as p_lb_mean, sum(c.p_lb_low) as p_lb_low, sum(c.p_lb_high) as p_lb_high
			from rollup_cells c join districts d on d.id = c.district_id
			where ${where({ ...src, county: null, districtId: null }, 'county', true)}
			group by c.fy, c.geo, c.practice_code`.execute(db)
	).rows;
	const small = base.filter((c) => c.operations < k);
	const keys = new Map<string, string[]>();
	if (small.length > 0) {
		const fb = src.fyBasis === 'federal' ? 'federal' : 'state';
		const inCell =
			src.basis === 'installed'
				? sql`e.${sql.raw(fb)}_fy_installed = s.fy`
				: sql`s.fy between e.${sql.raw(fb)}_fy_first and e.${sql.raw(fb)}_fy_last`;
		const { rows } = await sql<{ county_fips: string; practice_code: string; fy: number; key: string }>`
			with s as (select * from unnest(${small.map((c) => c.county_fips)}::text[], ${small.map((c) => c.practice_code)}::text[],
				${small.map((c) => c.fy)}::int[]) as s(county_fips, practice_code, fy))
			select distinct s.county_fips, s.practice_code, s.fy, e.district_id || ':' || e.operation_key as key
			from s join record_estimates e on e.method_version = ${src.methodVersion} and e.county_fips = s.county_fips
				and e.practice_code = s.practice_code and ${inCell}`.execute(db);
		for (const r of rows) {
			const id = `${r.county_fips}|${r.practice_code}|${r.fy}`;
			const list = keys.get(id);
			if (list) list.push(r.key);
			else keys.set(id, [r.key]);
		}
	}
	const cells: BaseCell[] = base.map((c) => ({
		fy: Number(c.fy),
		practice_code: c.practice_code,
		county_fips: c.county_fips,
		region: c.region,
		operations: c.operations,
		operation_keys: c.operations < k ? (keys.get(`${c.county_fips}|${c.practice_code}|${c.fy}`) ?? []) : null,
		practices: c.practices,
		credited_acres: Number(c.credited_acres),
		cost_usd: Number(c.cost_usd),
		cost_share_usd: Number(c.cost_share_usd),
		n_lb_mean: Number(c.n_lb_mean),
		n_lb_low: Number(c.n_lb_low),
		n_lb_high: Number(c.n_lb_high),
		p_lb_mean: Number(c.p_lb_mean),
		p_lb_low: Number(c.p_lb_low),
		p_lb_high: Number(c.p_lb_high)
	}));
	const { published, counts } = applySmallCellRule(cells, k);
	const shown = published.filter((p) => !src.county || p.county_fips === src.county);
	const levelOrder = { county: 0, region: 1, state: 2 } as const;
	shown.sort(
		(a, b) =>
			a.fy - b.fy ||
			levelOrder[a.level] - levelOrder[b.level] ||
			(a.county_fips ?? a.region ?? '').localeCompare(b.county_fips ?? b.region ?? '') ||
			a.practice_code.localeCompare(b.practice_code)
	);
	const toOut = (m: (typeof published)[number]) => ({
		practices: m.practices,
		credited_acres: round(m.credited_acres, 2),
		cost_usd: round(m.cost_usd, 2),
		cost_share_usd: round(m.cost_share_usd, 2),
		n_lb_yr_mean: round(m.n_lb_mean, 1),
		n_lb_yr_low: round(m.n_lb_low, 1),
		n_lb_yr_high: round(m.n_lb_high, 1),
		p_lb_yr_mean: round(m.p_lb_mean, 1),
		p_lb_yr_low: round(m.p_lb_low, 1),
		p_lb_yr_high: round(m.p_lb_high, 1),
		usd_per_lb_n: m.n_lb_mean > 0 ? round(m.cost_usd / m.n_lb_mean, 2) : null
	});
	const out: RollupCell[] = shown.map((p) => ({
		fy: p.fy,
		county_fips: p.county_fips,
		county_name: p.county_fips ? (names.counties.get(p.county_fips) ?? null) : null,
		practice_code: p.practice_code,
		practice_name: names.practices.get(p.practice_code) ?? '',
		area_level: p.level,
		area_name:
			p.level === 'county' ? (names.counties.get(p.county_fips!) ?? p.county_fips!) : p.level === 'region' ? p.region! : 'Statewide',
		operations: p.operations,
		...toOut(p)
	}));
	const byFy = new Map<number, (typeof published)[number]>();
	for (const p of shown) {
		const t = byFy.get(p.fy);
		if (!t) byFy.set(p.fy, { ...p });
		else
			for (const key of [
				'practices',
				'credited_acres',
				'cost_usd',
				'cost_share_usd',
				'n_lb_mean',
				'n_lb_low',
				'n_lb_high',
				'p_lb_mean',
				'p_lb_low',
				'p_lb_high'
			] as const)
				t[key] += p[key];
	}
	const totals: RollupTotal[] = [...byFy.values()].sort((a, b) => a.fy - b.fy).map((t) => ({ fy: t.fy, operations: null, ...toOut(t) }));
	return { cells: out, totals, counts };
}
