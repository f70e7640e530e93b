// Anonymisation of practice records for the research dataset (pure; no I/O, no Node APIs).
//
// Floor: Section 1619 of the Food, Conservation, and Energy Act of 2008 (7 U.S.C. 8791(b)) forbids disclosing
// a producer's information or the location of their land except in statistical or aggregate form that
// identifies no one. What this module does to each record:
// - the record id becomes a pseudonymous id: a keyed hash (HMAC-SHA-256 under a server secret), computed by
//   the caller's `pseudonym` function so this file stays free of Node APIs (src/lib/server/dataset/);
// - credited acres are rounded: to the whole acre below ROUND_TO_5_FROM acres, to 5 acres from there on
//   (the threshold is our own rule); the N and P estimates are scaled to the rounded acres and rounded to
//   0.1 lb, so exact acres cannot be recovered from them;
// - dates become year and month; HUC-12 becomes HUC-8; the free-text funding program becomes a category;
// - the small-cell rule: every county × fiscal year (of installation) × practice cell with fewer than k
//   distinct operations (k = 3 by default) — or one in which a single operation holds more than the
//   dominance share of the cell's acres — is generalised county → the district's region → the state; what
//   still fails at the state level is suppressed (left out). Cells that pass at county level are never
//   pooled, so no published group is the difference of two others.
//   k = 3 and dominance 60 % are common statistical-disclosure practice recalled from memory (no stored
//   source); both are configurable.
// - HUC-8 appears only on county-level rows, and only when every HUC-8 group of the row's cell (including
//   the group with no HUC-8) has at least k operations and passes the dominance test; otherwise the whole
//   cell shows no HUC-8.

export interface SourceRecord {
	record_id: string;
	practice_code: string;
	practice_name: string;
	county_fips: string;
	/** The district's region (districts.region). */
	region: string;
	state_fips: string;
	huc12: string | null;
	/** YYYY-MM-DD */
	installed_on: string;
	/** Fiscal year of installation (the cell's FY). */
	fy_installed: number;
	/** First and last fiscal year in service; null when never in service. */
	fy_first: number | null;
	fy_last: number | null;
	credited_acres: number | null;
	n_lb_mean: number;
	n_lb_low: number;
	n_lb_high: number;
	p_lb_mean: number;
	p_lb_low: number;
	p_lb_high: number;
	method_version: string;
	funding_program: string | null;
	/** Distinct-operation key, unique across districts (never published). */
	operation_key: string;
}

export type AreaLevel = 'county' | 'region' | 'state';

export type FundingCategory = 'federal' | 'state' | 'local' | 'private' | 'multiple' | 'other' | 'not_reported';

/** One published row. The column list is DATASET_COLUMNS; nothing else ever leaves this module. */
export interface DatasetRow {
	pid: string;
	practice_code: string;
	practice_name: string;
	area_level: AreaLevel;
	county_fips: string | null;
	region: string | null;
	state_fips: string;
	huc8: string | null;
	install_year: number;
	install_month: number;
	fy_installed: number;
	fy_in_service_first: number | null;
	fy_in_service_last: number | null;
	credited_acres: number;
	n_lb_mean: number;
	n_lb_low: number;
	n_lb_high: number;
	p_lb_mean: number;
	p_lb_low: number;
	p_lb_high: number;
	method_version: string;
	funding_category: FundingCategory;
}

export const DATASET_COLUMNS = [
	'pid',
	'practice_code',
	'practice_name',
	'area_level',
	'county_fips',
	'region',
	'state_fips',
	'huc8',
	'install_year',
	'install_month',
	'fy_installed',
	'fy_in_service_first',
	'fy_in_service_last',
	'credited_acres',
	'n_lb_mean',
	'n_lb_low',
	'n_lb_high',
	'p_lb_mean',
	'p_lb_low',
	'p_lb_high',
	'method_version',
	'funding_category'
] as const satisfies readonly (keyof DatasetRow)[];

export interface AnonymiseOptions {
	/** Minimum distinct operations per published cell (default 3). */
	k?: number;
	/** A cell where one operation holds more than this share of the acres is treated as small (default 0.6). */
	dominance?: number;
	/** The keyed hash of a record id (HMAC-SHA-256 hex in the server). */
	pseudonym: (recordId: string) => string;
}

export interface AnonymiseCounts {
	k: number;
	dominance: number;
	records: number;
	cells: number;
	published_as_county: number;
	generalised_to_region: number;
	generalised_to_state: number;
	suppressed: number;
	/** Records left out (in suppressed cells). */
	suppressed_records: number;
	/** Cells that failed only on dominance (they had k or more operations). */
	dominated: number;
	/** County-level cells whose HUC-8 was withheld. */
	huc8_withheld: number;
}

export const DEFAULT_K = 3;
export const DEFAULT_DOMINANCE = 0.6;
/** Our own rule: from this many acres up, credited acres are rounded to 5 acres. */
export const ROUND_TO_5_FROM = 100;

/** Credited acres for publication: whole acres below ROUND_TO_5_FROM, multiples of 5 from there on. */
export function roundAcres(acres: number | null): number {
	if (acres == null || !Number.isFinite(acres) || acres <= 0) return 0;
	const whole = Math.round(acres);
	if (whole < ROUND_TO_5_FROM) return whole;
	return Math.round(acres / 5) * 5;
}

/** `2024-05-17` → { year: 2024, month: 5 }. */
export function yearMonth(date: string): { year: number; month: number } {
	const m = /^(\d{4})-(\d{2})-\d{2}/.exec(date);
	if (!m) throw new RangeError(`not a YYYY-MM-DD date: ${date}`);
	return { year: Number(m[1]), month: Number(m[2]) };
}

/** The first 8 digits of a 12-digit hydrologic unit code; null for anything else. */
export function huc8Of(huc12: string | null): string | null {
	if (!huc12) return null;
	const digits = huc12.trim();
	return /^\d{12}$/.test(digits) ? digits.slice(0, 8) : null;
}

const FUNDING_RULES: [Exclude<FundingCategory, 'multiple' | 'other' | 'not_reported'>, RegExp][] = [
	['federal', /\b(federal|usda|nrcs|eqip|csp|crp|crep|rcpp|epa|319)\b/i],
	['state', /\bstate\b/i],
	['local', /\b(county|district|city|local|municipal|watershed)\b/i],
	['private', /\b(private|landowner|producer|self|foundation|none)\b/i]
];

const fundingSeen = new Map<string, FundingCategory>();

/** The funding program as districts name it → a coarse category (the free text is never published). */
export function fundingCategory(program: string | null): FundingCategory {
	if (program == null || program.trim() === '') return 'not_reported';
	const seen = fundingSeen.get(program);
	if (seen) return seen;
	const category = categoryOf(program);
	// Districts name a handful of programs; remember them (bounded, so odd input cannot grow it).
	if (fundingSeen.size < 10_000) fundingSeen.set(program, category);
	return category;
}

function categoryOf(program: string): FundingCategory {
	const hits = new Set(FUNDING_RULES.filter(([, re]) => re.test(program)).map(([c]) => c));
	if (hits.size === 0) return 'other';
	if (hits.size > 1) return 'multiple';
	return [...hits][0];
}

const round1 = (x: number): number => Math.round(x * 10) / 10;

/** One operation's share of a cell (several records of one operation may be summed or given one by one). */
export interface CellContribution {
	method_version: string;
	county_fips: string;
	region: string;
	state_fips: string;
	fy_installed: number;
	practice_code: string;
	huc8: string | null;
	operation_key: string;
	acres: number;
	/** How many records this contribution stands for (default 1). */
	records?: number;
}

type OpAcres = Map<string, number>;

/** What the rule needs of a group of records: distinct operations, total acres and the largest operation's acres. */
export interface OpStats {
	operations: number;
	acres: number;
	/** The acres of the operation holding the most acres in the group. */
	top_acres: number;
}

/** OpStats of operations → acres. */
export function opStatsOf(ops: OpAcres): OpStats {
	let acres = 0;
	let top = 0;
	for (const a of ops.values()) {
		acres += a;
		top = Math.max(top, a);
	}
	return { operations: ops.size, acres, top_acres: top };
}

/** Whether one operation holds more than `dominance` of the group's acres. */
export function isDominated(s: OpStats, dominance: number): boolean {
	return s.acres > 0 && s.operations > 1 && s.top_acres / s.acres > dominance;
}

/** The rule for one group: at least k operations and no dominating operation. */
export function passesRule(s: OpStats, k: number, dominance: number): boolean {
	return s.operations >= k && !isDominated(s, dominance);
}

/** Distinct operations and whether one operation holds more than `dominance` of the acres. */
export function cellStats(ops: OpAcres, dominance: number): { operations: number; dominated: boolean } {
	const s = opStatsOf(ops);
	return { operations: s.operations, dominated: isDominated(s, dominance) };
}

function addOp(into: OpAcres, op: string, acres: number): void {
	into.set(op, (into.get(op) ?? 0) + Math.max(0, acres));
}

function mergeOps(cells: readonly { ops: OpAcres }[]): OpAcres {
	const all: OpAcres = new Map();
	for (const c of cells) for (const [op, a] of c.ops) addOp(all, op, a);
	return all;
}

function groupBy<T>(items: Iterable<T>, key: (t: T) => string): Map<string, T[]> {
	const m = new Map<string, T[]>();
	for (const t of items) {
		const kk = key(t);
		const list = m.get(kk);
		if (list) list.push(t);
		else m.set(kk, [t]);
	}
	return m;
}

/**
 * How a base cell is published: its area level, whether its county rows show HUC-8, and the cell's region
 * (the region a region-level row names: the pool's, never a record's own district's). Null = suppressed.
 */
export type CellDecision = { level: AreaLevel; showHuc8: boolean; region: string } | null;
export type CellLocator = Pick<SourceRecord, 'method_version' | 'county_fips' | 'fy_installed' | 'practice_code'>;

export const baseCellKey = (c: CellLocator): string => `${c.method_version}|${c.county_fips}|${c.fy_installed}|${c.practice_code}`;

/**
 * One county × FY × practice cell, already aggregated (the server computes these in SQL, so no list of
 * records or operations is ever held): its operation statistics, its record count and the statistics of
 * each of its HUC-8 groups (the group with no HUC-8 included).
 */
export interface CellAggregate extends CellLocator, OpStats {
	region: string;
	state_fips: string;
	records: number;
	huc8_groups: readonly OpStats[];
}

/**
 * A pool of small cells the rule asks about: the small cells of one method, FY and practice in one region
 * (level 'region'), or those left over in one state (level 'state'). The answer is the OpStats of the union
 * of the member cells' operations (an operation in two member cells counts once, with its acres summed).
 */
export interface CellPool {
	key: string;
	level: 'region' | 'state';
	cells: readonly CellAggregate[];
}

function checkOptions(opts: { k?: number; dominance?: number }): { k: number; dominance: number } {
	const k = opts.k ?? DEFAULT_K;
	const dominance = opts.dominance ?? DEFAULT_DOMINANCE;
	if (!Number.isInteger(k) || k < 1) throw new RangeError(`k is a whole number ≥ 1, not ${k}`);
	if (!(dominance > 0 && dominance <= 1)) throw new RangeError(`dominance is a share in (0, 1], not ${dominance}`);
	return { k, dominance };
}

/**
 * The small-cell rule on per-cell aggregates, in steps: it yields the pools it needs statistics for (first
 * the region pools, then the state pools of what is left) and is resumed with a map pool key → OpStats.
 * Returns each base cell's decision (null = suppressed) and the counts. The caller supplies the pool
 * statistics from memory (`decideCells`) or from the database, so the rule itself lives only here.
 */
export function* decideCellAggregates(
	cells: Iterable<CellAggregate>,
	opts: { k?: number; dominance?: number } = {}
): Generator<CellPool[], { decisions: Map<string, CellDecision>; counts: AnonymiseCounts }, Map<string, OpStats>> {
	const { k, dominance } = checkOptions(opts);
	const counts: AnonymiseCounts = {
		k,
		dominance,
		records: 0,
		cells: 0,
		published_as_county: 0,
		generalised_to_region: 0,
		generalised_to_state: 0,
		suppressed: 0,
		suppressed_records: 0,
		dominated: 0,
		huc8_withheld: 0
	};
	const decisions = new Map<string, CellDecision>();
	const small: CellAggregate[] = [];
	for (const cell of cells) {
		counts.cells++;
		counts.records += cell.records;
		if (passesRule(cell, k, dominance)) {
			counts.published_as_county++;
			const showHuc8 = cell.huc8_groups.every((g) => passesRule(g, k, dominance));
			if (!showHuc8) counts.huc8_withheld++;
			decisions.set(baseCellKey(cell), { level: 'county', showHuc8, region: cell.region });
		} else {
			if (cell.operations >= k) counts.dominated++;
			small.push(cell);
		}
	}
	// Pool the small cells of one method, FY and practice: by region first, then what is left across the state.
	const groupKey = (c: CellAggregate) => `${c.method_version}|${c.fy_installed}|${c.practice_code}`;
	const regionPools: CellPool[] = [];
	for (const [g, group] of groupBy(small, groupKey)) {
		for (const [region, inRegion] of groupBy(group, (c) => c.region)) {
			regionPools.push({ key: `${g}|region:${region}`, level: 'region', cells: inRegion });
		}
	}
	const regionStats = regionPools.length > 0 ? yield regionPools : new Map<string, OpStats>();
	const leftover: CellAggregate[] = [];
	for (const pool of regionPools) {
		const s = regionStats.get(pool.key);
		if (!s) throw new Error(`no statistics for pool ${pool.key}`);
		if (passesRule(s, k, dominance)) {
			counts.generalised_to_region += pool.cells.length;
			for (const c of pool.cells) decisions.set(baseCellKey(c), { level: 'region', showHuc8: false, region: c.region });
		} else leftover.push(...pool.cells);
	}
	const statePools: CellPool[] = [];
	for (const [g, group] of groupBy(leftover, groupKey)) {
		for (const [state, inState] of groupBy(group, (c) => c.state_fips)) {
			statePools.push({ key: `${g}|state:${state}`, level: 'state', cells: inState });
		}
	}
	const stateStats = statePools.length > 0 ? yield statePools : new Map<string, OpStats>();
	for (const pool of statePools) {
		const s = stateStats.get(pool.key);
		if (!s) throw new Error(`no statistics for pool ${pool.key}`);
		if (passesRule(s, k, dominance)) {
			counts.generalised_to_state += pool.cells.length;
			for (const c of pool.cells) decisions.set(baseCellKey(c), { level: 'state', showHuc8: false, region: c.region });
		} else {
			counts.suppressed += pool.cells.length;
			for (const c of pool.cells) {
				counts.suppressed_records += c.records;
				decisions.set(baseCellKey(c), null);
			}
		}
	}
	return { decisions, counts };
}

interface Cell {
	key: string;
	first: CellContribution;
	/** The cell's region: the first in sort order of its records' district regions (a county shared by districts of two regions has one). */
	region: string;
	ops: OpAcres;
	huc: Map<string, OpAcres>;
	records: number;
}

/**
 * The small-cell rule on cell contributions held in memory (tests, small sets): aggregates them per cell and
 * runs `decideCellAggregates`, answering its pool questions from the contributions.
 */
export function decideCells(
	contributions: Iterable<CellContribution>,
	opts: { k?: number; dominance?: number } = {}
): { decisions: Map<string, CellDecision>; counts: AnonymiseCounts } {
	const cells = new Map<string, Cell>();
	for (const c of contributions) {
		const key = baseCellKey(c);
		let cell = cells.get(key);
		if (!cell) cells.set(key, (cell = { key, first: c, region: c.region, ops: new Map(), huc: new Map(), records: 0 }));
		if (c.region < cell.region) cell.region = c.region;
		addOp(cell.ops, c.operation_key, c.acres);
		const h = c.huc8 ?? '';
		if (!cell.huc.has(h)) cell.huc.set(h, new Map());
		addOp(cell.huc.get(h)!, c.operation_key, c.acres);
		cell.records += c.records ?? 1;
	}
	const aggregates: CellAggregate[] = [...cells.values()].map((c) => ({
		method_version: c.first.method_version,
		county_fips: c.first.county_fips,
		fy_installed: c.first.fy_installed,
		practice_code: c.first.practice_code,
		region: c.region,
		state_fips: c.first.state_fips,
		records: c.records,
		...opStatsOf(c.ops),
		huc8_groups: [...c.huc.values()].map(opStatsOf)
	}));
	const steps = decideCellAggregates(aggregates, opts);
	let step = steps.next();
	while (!step.done) {
		const stats = new Map<string, OpStats>();
		for (const pool of step.value) stats.set(pool.key, opStatsOf(mergeOps(pool.cells.map((c) => cells.get(baseCellKey(c))!))));
		step = steps.next(stats);
	}
	return step.value;
}

export function contributionOf(r: SourceRecord): CellContribution {
	return {
		method_version: r.method_version,
		county_fips: r.county_fips,
		region: r.region,
		state_fips: r.state_fips,
		fy_installed: r.fy_installed,
		practice_code: r.practice_code,
		huc8: huc8Of(r.huc12),
		operation_key: r.operation_key,
		acres: r.credited_acres ?? 0
	};
}

/** One record → its published row as its cell's decision says (area level, HUC-8 shown or not, the cell's region). */
export function toRow(r: SourceRecord, d: NonNullable<CellDecision>, pseudonym: (id: string) => string): DatasetRow {
	const level = d.level;
	const { year, month } = yearMonth(r.installed_on);
	const acres = roundAcres(r.credited_acres);
	const exact = r.credited_acres ?? 0;
	const scale = exact > 0 ? acres / exact : 0;
	return {
		pid: pseudonym(r.record_id),
		practice_code: r.practice_code,
		practice_name: r.practice_name,
		area_level: level,
		county_fips: level === 'county' ? r.county_fips : null,
		region: level === 'region' ? d.region : null,
		state_fips: r.state_fips,
		huc8: level === 'county' && d.showHuc8 ? huc8Of(r.huc12) : null,
		install_year: year,
		install_month: month,
		fy_installed: r.fy_installed,
		fy_in_service_first: r.fy_first,
		fy_in_service_last: r.fy_last,
		credited_acres: acres,
		n_lb_mean: round1(r.n_lb_mean * scale),
		n_lb_low: round1(r.n_lb_low * scale),
		n_lb_high: round1(r.n_lb_high * scale),
		p_lb_mean: round1(r.p_lb_mean * scale),
		p_lb_low: round1(r.p_lb_low * scale),
		p_lb_high: round1(r.p_lb_high * scale),
		method_version: r.method_version,
		funding_category: fundingCategory(r.funding_program)
	};
}

/** The cell a published row belongs to: its area × FY × practice (what a linker can group on). */
export function publishedCellKey(
	row: Pick<DatasetRow, 'area_level' | 'county_fips' | 'region' | 'state_fips' | 'fy_installed' | 'practice_code' | 'method_version'>
): string {
	const area = row.area_level === 'county' ? row.county_fips : row.area_level === 'region' ? row.region : row.state_fips;
	return `${row.method_version}|${row.area_level}:${area}|${row.fy_installed}|${row.practice_code}`;
}

/**
 * Applies every rule to records held in memory (tests, small sets). Returns the rows in input order
 * (suppressed ones left out) and the counts for the release notes.
 */
export function anonymise(records: readonly SourceRecord[], opts: AnonymiseOptions): { rows: DatasetRow[]; counts: AnonymiseCounts } {
	const { decisions, counts } = decideCells(records.map(contributionOf), opts);
	const rows: DatasetRow[] = [];
	for (const r of records) {
		const d = decisions.get(baseCellKey(r));
		if (d) rows.push(toRow(r, d, opts.pseudonym));
	}
	return { rows, counts };
}
