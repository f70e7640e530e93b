// Summary cells from record facts: for every fiscal year a record counts in (installed and in-service
// bases, state and federal FYs), its amounts are added to six cells of its district — county × practice,
// county, HUC-8 × practice, HUC-8, practice, all practices — and its operation to those cells' sets of
// distinct operations. Amounts are integers (cents, 1/10,000 acre, millionths of a pound) so every sum is
// exact and any order of adding gives the same cells: a full rebuild and a refresh that adds the deltas of
// changed records (cellDeltas: new contributions minus old ones) to stored cells end with the same cells.

export type FyBasisName = 'state' | 'federal';
export type CountBasisName = 'installed' | 'in_service';
export type GeoLevel = 'county' | 'huc8' | 'district';

export interface Span {
	installed: number;
	first: number | null;
	last: number | null;
}

/** One record's footprint with integer amounts (as stored in record_estimates, scaled). */
export interface CellFact {
	district_id: number;
	county_fips: string;
	huc8: string | null;
	practice_code: string;
	operation_key: string;
	state: Span;
	federal: Span;
	/** 1/10,000 acre. */
	acres: number;
	/** Cents. */
	cost: number;
	cost_share: number;
	/** Millionths of a pound per year. */
	n_mean: number;
	n_low: number;
	n_high: number;
	p_mean: number;
	p_low: number;
	p_high: number;
}

export interface CellRow {
	fy_basis: FyBasisName;
	basis: CountBasisName;
	geo_level: GeoLevel;
	fy: number;
	district_id: number;
	/** County FIPS, HUC-8 ('' when not reported) or '' at district level. */
	geo: string;
	/** Practice code, or '*' for all practices. */
	practice_code: string;
	practices: number;
	operations: number;
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

/** A summary key: all cells of one district, FY basis, counting basis and FY are computed together. */
export interface SummaryKey {
	district_id: number;
	fy_basis: FyBasisName;
	basis: CountBasisName;
	fy: number;
}

export const summaryKeyId = (k: SummaryKey) => `${k.district_id}|${k.fy_basis}|${k.basis}|${k.fy}`;

/** Every (FY basis, basis, FY) a fact counts in. */
export function* countedIn(f: Pick<CellFact, 'state' | 'federal'>): Generator<[FyBasisName, CountBasisName, number]> {
	for (const fb of ['state', 'federal'] as const) {
		const s = f[fb];
		yield [fb, 'installed', s.installed];
		if (s.first !== null && s.last !== null) for (let fy = s.first; fy <= s.last; fy++) yield [fb, 'in_service', fy];
	}
}

/** The summary keys a fact's footprint touches. */
export function keysOf(f: Pick<CellFact, 'district_id' | 'state' | 'federal'>): SummaryKey[] {
	return [...countedIn(f)].map(([fy_basis, basis, fy]) => ({ district_id: f.district_id, fy_basis, basis, fy }));
}

const FY_BASES: readonly FyBasisName[] = ['state', 'federal'];
const BASES: readonly CountBasisName[] = ['installed', 'in_service'];

/**
 * Calls `visit` with the entry of each summary key a fact counts in, made by `make` on first use (null: skip
 * the key). Entries are keyed by a number so the hot loops of aggregateCells and cellDeltas build no strings.
 */
function forEachEntry<E>(byKey: Map<number, E>, f: CellFact, make: (key: SummaryKey) => E | null, visit: (entry: E) => void): void {
	for (let b = 0; b < 2; b++) {
		const fy_basis = FY_BASES[b];
		const span = f[fy_basis];
		for (let c = 0; c < 2; c++) {
			let from: number;
			let to: number;
			if (c === 0) from = to = span.installed;
			else if (span.first === null || span.last === null) continue;
			else {
				from = span.first;
				to = span.last;
			}
			for (let fy = from; fy <= to; fy++) {
				const num = ((f.district_id * 2 + b) * 2 + c) * 10_000 + fy;
				const existing = byKey.get(num);
				const entry = existing ?? make({ district_id: f.district_id, fy_basis, basis: BASES[c], fy });
				if (entry == null) continue;
				if (existing === undefined) byKey.set(num, entry);
				visit(entry);
			}
		}
	}
}

interface Acc {
	row: CellRow;
	ops: Set<number>;
}

function newAcc(
	k: { fy_basis: FyBasisName; basis: CountBasisName; fy: number; district_id: number },
	geo_level: GeoLevel,
	geo: string,
	practice_code: string
): Acc {
	return {
		row: {
			fy_basis: k.fy_basis,
			basis: k.basis,
			geo_level,
			fy: k.fy,
			district_id: k.district_id,
			geo,
			practice_code,
			practices: 0,
			operations: 0,
			...zeroAmounts()
		},
		ops: new Set()
	};
}

/** The integer amounts a fact adds to each cell it counts in. */
export const AMOUNTS = ['acres', 'cost', 'cost_share', 'n_mean', 'n_low', 'n_high', 'p_mean', 'p_low', 'p_high'] as const;
type Amounts = Pick<CellRow, (typeof AMOUNTS)[number]>;

export const zeroAmounts = (): Amounts => ({
	acres: 0,
	cost: 0,
	cost_share: 0,
	n_mean: 0,
	n_low: 0,
	n_high: 0,
	p_mean: 0,
	p_low: 0,
	p_high: 0
});

/** Adds `sign` × (one practice and the amounts of `f`) to a cell row. */
function addFact(r: CellRow, f: Amounts & { practices?: number }, sign: number): void {
	// Written out (not a loop over AMOUNTS): this runs for every (record, FY, cell).
	r.practices += sign * (f.practices ?? 1);
	r.acres += sign * f.acres;
	r.cost += sign * f.cost;
	r.cost_share += sign * f.cost_share;
	r.n_mean += sign * f.n_mean;
	r.n_low += sign * f.n_low;
	r.n_high += sign * f.n_high;
	r.p_mean += sign * f.p_mean;
	r.p_low += sign * f.p_low;
	r.p_high += sign * f.p_high;
}

function add(into: Acc, from: Acc): void {
	addFact(into.row, from.row, 1);
	for (const o of from.ops) into.ops.add(o);
}

/**
 * Cells of the given facts. With `only`, just the cells of those summary keys (pass every fact of the keys'
 * districts: a cell is complete only when all facts counting in it are given).
 *
 * Each (fact, FY) is added to its two finest cells (county × practice and HUC-8 × practice); the coarser
 * levels are merged from those at the end (amounts summed, operation sets united).
 */
export function aggregateCells(facts: Iterable<CellFact>, only?: ReadonlySet<string>): CellRow[] {
	// Summary key (as a number) → its key and fine cells by "county|practice" / "huc8|practice".
	const byKey = new Map<number, { key: SummaryKey; county: Map<string, Acc>; huc8: Map<string, Acc> }>();
	const opIds = new Map<string, number>();
	for (const f of facts) {
		const opKey = `${f.district_id}|${f.operation_key}`;
		let op = opIds.get(opKey);
		if (op === undefined) {
			op = opIds.size;
			opIds.set(opKey, op);
		}
		const huc = f.huc8 ?? '';
		const countyCell = `${f.county_fips}|${f.practice_code}`;
		const hucCell = `${huc}|${f.practice_code}`;
		forEachEntry(
			byKey,
			f,
			(key) => (only && !only.has(summaryKeyId(key)) ? null : { key, county: new Map(), huc8: new Map() }),
			(entry) => {
				let acc = entry.county.get(countyCell);
				if (!acc) entry.county.set(countyCell, (acc = newAcc(entry.key, 'county', f.county_fips, f.practice_code)));
				addFact(acc.row, f, 1);
				acc.ops.add(op);
				let hacc = entry.huc8.get(hucCell);
				if (!hacc) entry.huc8.set(hucCell, (hacc = newAcc(entry.key, 'huc8', huc, f.practice_code)));
				addFact(hacc.row, f, 1);
				hacc.ops.add(op);
			}
		);
	}
	const out: Acc[] = [];
	for (const { key, county, huc8 } of byKey.values()) {
		const merged = new Map<string, Acc>();
		const mergeInto = (id: string, level: GeoLevel, geo: string, practice: string, from: Acc) => {
			let acc = merged.get(id);
			if (!acc) merged.set(id, (acc = newAcc(key, level, geo, practice)));
			add(acc, from);
		};
		for (const acc of county.values()) {
			out.push(acc);
			mergeInto(`c|${acc.row.geo}`, 'county', acc.row.geo, '*', acc);
			mergeInto(`d|${acc.row.practice_code}`, 'district', '', acc.row.practice_code, acc);
			mergeInto('d|*', 'district', '', '*', acc);
		}
		for (const acc of huc8.values()) {
			out.push(acc);
			mergeInto(`h|${acc.row.geo}`, 'huc8', acc.row.geo, '*', acc);
		}
		out.push(...merged.values());
	}
	return out.map((acc) => {
		acc.row.operations = acc.ops.size;
		return acc.row;
	});
}

// --- deltas: what a change of some records does to the stored cells ----------------------------------------

/** A cell's identity (its primary key within a method version). */
export const cellId = (c: Pick<CellRow, 'district_id' | 'fy_basis' | 'basis' | 'fy' | 'geo_level' | 'geo' | 'practice_code'>) =>
	`${c.district_id}|${c.fy_basis}|${c.basis}|${c.fy}|${c.geo_level}|${c.geo}|${c.practice_code}`;

/** Whether a fact counts in a cell. */
export function countsIn(
	f: CellFact,
	c: Pick<CellRow, 'district_id' | 'fy_basis' | 'basis' | 'fy' | 'geo_level' | 'geo' | 'practice_code'>
): boolean {
	if (f.district_id !== c.district_id) return false;
	if (c.practice_code !== '*' && c.practice_code !== f.practice_code) return false;
	if (c.geo_level === 'county' ? f.county_fips !== c.geo : c.geo_level === 'huc8' ? (f.huc8 ?? '') !== c.geo : false) return false;
	const span = f[c.fy_basis];
	if (c.basis === 'installed') return span.installed === c.fy;
	return span.first !== null && span.last !== null && span.first <= c.fy && c.fy <= span.last;
}

/** A delta cell: its row (amounts and practices added, operations filled by `finish`) and, per operation, how
 * many of the changed records count in it [before, after]. */
interface DeltaAcc {
	row: CellRow;
	ops: Map<string, [number, number]>;
}

/** An operation whose other records decide some cell's distinct-operation count: see cellDeltas. */
export interface OperationQuestion {
	district_id: number;
	operation_key: string;
}

/** The cell deltas of a change, once the other records of `operations` are known (see cellDeltas). */
export interface PendingDeltas {
	/** Operations some cell might gain or lose, depending on their records outside the change. */
	operations: OperationQuestion[];
	/** The deltas, given the facts of the unchanged records of `operations` (others are ignored). */
	finish(others: Iterable<CellFact>): CellRow[];
}

/**
 * What replacing the facts `before` by the facts `after` (the same records, old and new footprints; a new
 * record has no `before`, a removed one no `after`) adds to each cell: practices and amounts exactly, and
 * the change in distinct operations. An operation appears in or leaves a cell only when the changed records
 * of that operation go from none to some counting in it (or back) — and then only if no other record of
 * the operation counts there, which is why `operations` lists the operations to look up and `finish` takes
 * the facts of their unchanged records. Cells whose delta is all zeros are left out.
 */
export function cellDeltas(before: Iterable<CellFact>, after: Iterable<CellFact>): PendingDeltas {
	// As in aggregateCells: each (fact, FY) goes to its two finest cells; the coarser ones are merged at the end.
	const byKey = new Map<number, { key: SummaryKey; county: Map<string, DeltaAcc>; huc8: Map<string, DeltaAcc> }>();
	const fine = (map: Map<string, DeltaAcc>, key: SummaryKey, id: string, level: GeoLevel, geo: string, practice: string) => {
		let a = map.get(id);
		if (!a) map.set(id, (a = { row: newAcc(key, level, geo, practice).row, ops: new Map() }));
		return a;
	};
	const count = (a: DeltaAcc, op: string, side: 0 | 1, n: number) => {
		let c = a.ops.get(op);
		if (!c) a.ops.set(op, (c = [0, 0]));
		c[side] += n;
	};
	const visit = (f: CellFact, side: 0 | 1) => {
		const sign = side === 0 ? -1 : 1;
		const huc = f.huc8 ?? '';
		const countyCell = `${f.county_fips}|${f.practice_code}`;
		const hucCell = `${huc}|${f.practice_code}`;
		forEachEntry(
			byKey,
			f,
			(key) => ({ key, county: new Map(), huc8: new Map() }),
			(entry) => {
				const ca = fine(entry.county, entry.key, countyCell, 'county', f.county_fips, f.practice_code);
				addFact(ca.row, f, sign);
				count(ca, f.operation_key, side, 1);
				const ha = fine(entry.huc8, entry.key, hucCell, 'huc8', huc, f.practice_code);
				addFact(ha.row, f, sign);
				count(ha, f.operation_key, side, 1);
			}
		);
	};
	for (const f of before) visit(f, 0);
	for (const f of after) visit(f, 1);
	const cells: DeltaAcc[] = [];
	for (const { key, county, huc8 } of byKey.values()) {
		const merged = new Map<string, DeltaAcc>();
		const mergeInto = (id: string, level: GeoLevel, geo: string, practice: string, from: DeltaAcc) => {
			const a = fine(merged, key, id, level, geo, practice);
			addFact(a.row, from.row, 1);
			for (const [op, [was, is]] of from.ops) {
				count(a, op, 0, was);
				count(a, op, 1, is);
			}
		};
		for (const a of county.values()) {
			cells.push(a);
			mergeInto(`c|${a.row.geo}`, 'county', a.row.geo, '*', a);
			mergeInto(`d|${a.row.practice_code}`, 'district', '', a.row.practice_code, a);
			mergeInto('d|*', 'district', '', '*', a);
		}
		for (const a of huc8.values()) {
			cells.push(a);
			mergeInto(`h|${a.row.geo}`, 'huc8', a.row.geo, '*', a);
		}
		cells.push(...merged.values());
	}
	const asked = new Map<string, OperationQuestion>();
	for (const { row, ops } of cells)
		for (const [op, [was, is]] of ops)
			if ((was === 0) !== (is === 0)) {
				const k = `${row.district_id}|${op}`;
				if (!asked.has(k)) asked.set(k, { district_id: row.district_id, operation_key: op });
			}
	return {
		operations: [...asked.values()],
		finish(others) {
			const byOperation = new Map<string, CellFact[]>();
			for (const f of others) {
				const k = `${f.district_id}|${f.operation_key}`;
				if (!asked.has(k)) continue;
				const list = byOperation.get(k);
				if (list) list.push(f);
				else byOperation.set(k, [f]);
			}
			const out: CellRow[] = [];
			for (const { row, ops } of cells) {
				for (const [op, [was, is]] of ops) {
					if ((was === 0) === (is === 0)) continue;
					const list = byOperation.get(`${row.district_id}|${op}`);
					if (list && list.some((f) => countsIn(f, row))) continue;
					row.operations += is > 0 ? 1 : -1;
				}
				if (row.practices !== 0 || row.operations !== 0 || AMOUNTS.some((k) => row[k] !== 0)) out.push(row);
			}
			return out;
		}
	};
}
