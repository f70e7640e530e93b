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

/** Packs a cell's [before, after] record counts of one operation in one number: before × OPS_SIDE + after
 * (each below 2^26, so sums stay exact). */
const OPS_SIDE = 2 ** 26;

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
 * The operations whose changed records count in different places after the change than before: for each
 * (district, operation), the changed records' places (geography, practice and FY spans) before and after,
 * compared as multisets. An operation whose places are the same on both sides has the same number of
 * changed records in every cell before and after, so it cannot enter or leave a cell: the result contains
 * every operation cellDeltas(before, after) asks about. It is cheap (no FY is visited), so the refresh can
 * start reading those operations' other records before the deltas are worked out.
 */
export function operationsMoved(before: Iterable<CellFact>, after: Iterable<CellFact>): OperationQuestion[] {
	const place = (f: CellFact) =>
		`${f.county_fips},${f.huc8 ?? ''},${f.practice_code},${f.state.installed},${f.state.first},${f.state.last},${f.federal.installed},${f.federal.first},${f.federal.last}`;
	// (district, operation) → place → after count minus before count.
	const balance = new Map<string, { question: OperationQuestion; places: Map<string, number> }>();
	const count = (f: CellFact, n: number) => {
		const id = `${f.district_id}|${f.operation_key}`;
		let b = balance.get(id);
		if (!b) balance.set(id, (b = { question: { district_id: f.district_id, operation_key: f.operation_key }, places: new Map() }));
		const p = place(f);
		b.places.set(p, (b.places.get(p) ?? 0) + n);
	};
	for (const f of before) count(f, -1);
	for (const f of after) count(f, 1);
	return [...balance.values()].filter((b) => [...b.places.values()].some((n) => n !== 0)).map((b) => b.question);
}

/** Gives each distinct string a small number (so hot loops key maps by numbers, not strings). */
class Numbering {
	readonly ids = new Map<string, number>();
	readonly values: string[] = [];
	of(s: string): number {
		let id = this.ids.get(s);
		if (id === undefined) {
			id = this.values.length;
			this.ids.set(s, id);
			this.values.push(s);
		}
		return id;
	}
}

/** Room for practice numbers in a fine cell's number. */
const PRACTICES = 4096;

/** Slots per FY in a run's amounts: practices, then AMOUNTS in order. */
const SLOTS = 1 + AMOUNTS.length;

/**
 * One cell over every FY of the change (same district, FY basis, counting basis, level, place and practice),
 * as differences between consecutive FYs (a fact counting in FYs from..to adds at `from` and takes away at
 * `to + 1`, whatever its length): how many changed facts count, their practices and amounts, and per
 * operation the packed [before, after] counts. `finish` of cellDeltas adds them up FY by FY.
 */
interface Run {
	key: Omit<SummaryKey, 'fy'>;
	geo_level: GeoLevel;
	geo: string;
	practice_code: string;
	/** Changed facts counting, per FY (differences). */
	touched: Int32Array;
	/** The FY indexes holding any difference: from `first` up to, not including, `end`. */
	first: number;
	end: number;
	/** SLOTS numbers per FY (differences). */
	sums: Float64Array;
	/** Operation number → its row in `opCounts`. */
	opRows: Map<number, number>;
	/** Per operation row, packed counts per FY (differences); grown as operations come. */
	opCounts: Float64Array;
}

/** A cell delta before `finish`: the row, and the operations that enter or leave it as far as the change goes. */
interface Pending {
	row: CellRow;
	/** [operation number, packed counts] pairs, flat. */
	flips: number[];
}

/**
 * What replacing the facts `before` by the facts `after` (the same records, old and new footprints; a new
 * record has no `before`, a removed one no `after`) adds to each cell: practices and amounts exactly, and
 * the change in distinct operations. An operation appears in or leaves a cell only when the changed records
 * of that operation go from none to some counting in it (or back) — and then only if no other record of
 * the operation counts there, which is why `operations` lists the operations to look up and `finish` takes
 * the facts of their unchanged records. Cells whose delta is all zeros are left out.
 *
 * A fact adds to its two finest cells (county × practice and HUC-8 × practice) over all its FYs at once:
 * each cell is kept as a run of FYs holding differences between consecutive FYs, so a fact costs the same
 * whatever the length of its span; the coarser levels are the runs merged, and the rows are read off the
 * runs at the end.
 */
export function cellDeltas(before: Iterable<CellFact>, after: Iterable<CellFact>): PendingDeltas {
	const sides: [CellFact[], CellFact[]] = [[...before], [...after]];
	// The FYs any fact counts in.
	let lo = Infinity;
	let hi = -Infinity;
	for (const facts of sides)
		for (const f of facts)
			for (const fb of FY_BASES) {
				const s = f[fb];
				lo = Math.min(lo, s.installed, s.first ?? Infinity);
				hi = Math.max(hi, s.installed, s.last ?? -Infinity);
			}
	const years = hi - lo + 1;
	/** Differences per FY, with room for the one after the last. */
	const slots = years + 1;
	const places = new Numbering();
	const practices = new Numbering();
	const operations = new Numbering();
	const operationOf: OperationQuestion[] = [];
	// (district, FY basis, counting basis) → runs by number: county × practice and HUC-8 × practice.
	const combos = new Map<number, { key: Omit<SummaryKey, 'fy'>; county: Map<number, Run>; huc8: Map<number, Run> }>();
	const newRun = (key: Omit<SummaryKey, 'fy'>, geo_level: GeoLevel, geo: string, practice_code: string): Run => ({
		key,
		geo_level,
		geo,
		practice_code,
		touched: new Int32Array(slots),
		first: slots,
		end: 0,
		sums: new Float64Array(slots * SLOTS),
		opRows: new Map(),
		opCounts: new Float64Array(slots * 8)
	});
	/** Where an operation's counts start in a run's opCounts (a new row of zeros the first time). */
	const opAt = (run: Run, op: number): number => {
		let row = run.opRows.get(op);
		if (row === undefined) {
			row = run.opRows.size;
			run.opRows.set(op, row);
			if ((row + 1) * slots > run.opCounts.length) {
				const grown = new Float64Array(run.opCounts.length * 2);
				grown.set(run.opCounts);
				run.opCounts = grown;
			}
		}
		return row * slots;
	};
	const runOf = (map: Map<number, Run>, id: number, key: Omit<SummaryKey, 'fy'>, level: GeoLevel, geo: string, practice: string) => {
		let r = map.get(id);
		if (!r) map.set(id, (r = newRun(key, level, geo, practice)));
		return r;
	};
	const amounts = new Float64Array(SLOTS);
	const addSpan = (run: Run, op: number, one: number, from: number, to: number) => {
		const at = opAt(run, op);
		const start = from - lo;
		const end = to - lo + 1;
		if (start < run.first) run.first = start;
		if (end + 1 > run.end) run.end = end + 1;
		run.touched[start]++;
		run.touched[end]--;
		run.opCounts[at + start] += one;
		run.opCounts[at + end] -= one;
		const sums = run.sums;
		for (let k = 0; k < SLOTS; k++) {
			sums[start * SLOTS + k] += amounts[k];
			sums[end * SLOTS + k] -= amounts[k];
		}
	};
	for (let side = 0; side < 2; side++) {
		const sign = side === 0 ? -1 : 1;
		const one = side === 0 ? OPS_SIDE : 1;
		for (const f of sides[side]) {
			// In AMOUNTS order, written out (a keyed read per amount would cost more than the rest of the loop).
			amounts[0] = sign;
			amounts[1] = sign * f.acres;
			amounts[2] = sign * f.cost;
			amounts[3] = sign * f.cost_share;
			amounts[4] = sign * f.n_mean;
			amounts[5] = sign * f.n_low;
			amounts[6] = sign * f.n_high;
			amounts[7] = sign * f.p_mean;
			amounts[8] = sign * f.p_low;
			amounts[9] = sign * f.p_high;
			const huc = f.huc8 ?? '';
			const practice = practices.of(f.practice_code);
			const countyCell = places.of(f.county_fips) * PRACTICES + practice;
			const hucCell = places.of(huc) * PRACTICES + practice;
			if (practice >= PRACTICES) throw new Error('too many practice codes in one change');
			const op = operations.of(`${f.district_id}|${f.operation_key}`);
			if (op === operationOf.length) operationOf.push({ district_id: f.district_id, operation_key: f.operation_key });
			for (let b = 0; b < 2; b++) {
				const span = b === 0 ? f.state : f.federal;
				for (let c = 0; c < 2; c++) {
					if (c === 1 && (span.first === null || span.last === null)) continue;
					const from = c === 0 ? span.installed : (span.first as number);
					const to = c === 0 ? span.installed : (span.last as number);
					const comboId = (f.district_id * 2 + b) * 2 + c;
					let combo = combos.get(comboId);
					if (!combo) {
						const key = { district_id: f.district_id, fy_basis: FY_BASES[b], basis: BASES[c] };
						combos.set(comboId, (combo = { key, county: new Map(), huc8: new Map() }));
					}
					addSpan(runOf(combo.county, countyCell, combo.key, 'county', f.county_fips, f.practice_code), op, one, from, to);
					addSpan(runOf(combo.huc8, hucCell, combo.key, 'huc8', huc, f.practice_code), op, one, from, to);
				}
			}
		}
	}
	// Coarser runs: each the sum of its finer runs.
	const merge = (into: Run, from: Run) => {
		const { first, end } = from;
		if (first < into.first) into.first = first;
		if (end > into.end) into.end = end;
		for (let i = first; i < end; i++) into.touched[i] += from.touched[i];
		for (let i = first * SLOTS; i < end * SLOTS; i++) into.sums[i] += from.sums[i];
		for (const [op, row] of from.opRows) {
			const at = opAt(into, op);
			const counts = into.opCounts;
			for (let i = first; i < end; i++) counts[at + i] += from.opCounts[row * slots + i];
		}
	};
	const runs: Run[] = [];
	for (const { key, county, huc8 } of combos.values()) {
		const countyAll = new Map<number, Run>();
		const hucAll = new Map<number, Run>();
		const districtPractice = new Map<number, Run>();
		const districtAll = new Map<number, Run>();
		for (const [id, r] of county) {
			runs.push(r);
			merge(runOf(countyAll, Math.floor(id / PRACTICES), key, 'county', r.geo, '*'), r);
			merge(runOf(districtPractice, id % PRACTICES, key, 'district', '', r.practice_code), r);
			merge(runOf(districtAll, 0, key, 'district', '', '*'), r);
		}
		for (const [id, r] of huc8) {
			runs.push(r);
			merge(runOf(hucAll, Math.floor(id / PRACTICES), key, 'huc8', r.geo, '*'), r);
		}
		for (const m of [countyAll, districtPractice, districtAll, hucAll]) for (const r of m.values()) runs.push(r);
	}
	// The rows (FY by FY, adding up the differences), with the operations that enter or leave each: those
	// whose changed records count on one side only.
	const cells: Pending[] = [];
	const asked = new Set<number>();
	for (const run of runs) {
		let touched = 0;
		const sums = new Float64Array(SLOTS);
		const ops = [...run.opRows.keys()];
		const counts = new Float64Array(ops.length);
		for (let i = run.first; i < run.end; i++) {
			touched += run.touched[i];
			for (let k = 0; k < SLOTS; k++) sums[k] += run.sums[i * SLOTS + k];
			for (let j = 0; j < ops.length; j++) counts[j] += run.opCounts[j * slots + i];
			if (touched === 0) continue;
			const row: CellRow = {
				fy_basis: run.key.fy_basis,
				basis: run.key.basis,
				geo_level: run.geo_level,
				fy: lo + i,
				district_id: run.key.district_id,
				geo: run.geo,
				practice_code: run.practice_code,
				practices: sums[0],
				operations: 0,
				acres: sums[1],
				cost: sums[2],
				cost_share: sums[3],
				n_mean: sums[4],
				n_low: sums[5],
				n_high: sums[6],
				p_mean: sums[7],
				p_low: sums[8],
				p_high: sums[9]
			};
			const flips: number[] = [];
			for (let j = 0; j < ops.length; j++) {
				const n = counts[j];
				if (n !== 0 && n < OPS_SIDE !== (n % OPS_SIDE === 0)) {
					flips.push(ops[j], n);
					asked.add(ops[j]);
				}
			}
			cells.push({ row, flips });
		}
	}
	return {
		operations: [...asked].map((op) => operationOf[op]),
		finish(others) {
			// Each operation's other records, all of them and by practice (a practice's cells need look at no other).
			const byOperation = new Map<number, { all: CellFact[]; byPractice: Map<string, CellFact[]> }>();
			for (const f of others) {
				const op = operations.ids.get(`${f.district_id}|${f.operation_key}`);
				if (op === undefined || !asked.has(op)) continue;
				let o = byOperation.get(op);
				if (!o) byOperation.set(op, (o = { all: [], byPractice: new Map() }));
				o.all.push(f);
				const list = o.byPractice.get(f.practice_code);
				if (list) list.push(f);
				else o.byPractice.set(f.practice_code, [f]);
			}
			const out: CellRow[] = [];
			for (const { row, flips } of cells) {
				for (let j = 0; j < flips.length; j += 2) {
					const o = byOperation.get(flips[j]);
					const list = o && (row.practice_code === '*' ? o.all : o.byPractice.get(row.practice_code));
					if (list && list.some((f) => countsIn(f, row))) continue;
					row.operations += flips[j + 1] % OPS_SIDE > 0 ? 1 : -1;
				}
				if (row.practices !== 0 || row.operations !== 0 || AMOUNTS.some((k) => row[k] !== 0)) out.push(row);
			}
			return out;
		}
	};
}
