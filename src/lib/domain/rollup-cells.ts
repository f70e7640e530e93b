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
 * `to + 1`, whatever its length): how many changed facts count, their practices and amounts; and, per FY,
 * the operations that enter or leave it as far as the change goes. `finish` of cellDeltas adds them up.
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
	/** A finest run's coarser runs (county × practice: county, practice, district; HUC-8 × practice: HUC-8). */
	parents: Run[];
	/** While one operation's facts are counted: that operation, and its counts' row in the scratch table. */
	op: number;
	opRow: number;
	/** The FY indexes that operation's counts span: from `opFirst` up to, not including, `opEnd`. */
	opFirst: number;
	opEnd: number;
	/** Position in the list of runs. */
	index: number;
	/** Per FY index, the row read off for it (-1: none). */
	cellAt: Int32Array;
	/** While `finish` looks at one operation's other records: that operation, and its coverage's row. */
	coverOp: number;
	coverRow: number;
}

/** The runs of one (district, FY basis, counting basis), by number: county × practice and HUC-8 × practice,
 * and the coarser ones: county, HUC-8, practice (district level) and all (district level). */
interface Combo {
	key: Omit<SummaryKey, 'fy'>;
	county: Map<number, Run>;
	huc8: Map<number, Run>;
	countyAll: Map<number, Run>;
	hucAll: Map<number, Run>;
	districtPractice: Map<number, Run>;
	districtAll: Map<number, Run>;
}

/**
 * The working state of cellDeltas. Its steps are methods (not closures made on each call) so that the code
 * the engine optimises for them is kept from one change to the next.
 */
class DeltaRuns {
	readonly runs: Run[] = [];
	readonly combos = new Map<number, Combo>();
	readonly places = new Numbering();
	readonly practices = new Numbering();
	/** The amounts a fact adds (SLOTS numbers: practices, then AMOUNTS), set before addSpan. */
	readonly amounts = new Float64Array(SLOTS);
	/** Scratch rows of one operation's counts before and after, per cell it touches (differences per FY). */
	scratch: [Int32Array, Int32Array];
	scratchRows = 0;
	/** The runs the current operation touched. */
	readonly opRuns: Run[] = [];
	/** Scratch rows of where one operation's other records count (finish), and the runs they belong to. */
	cover: Int32Array;
	readonly covered: Run[] = [];

	constructor(
		readonly lo: number,
		readonly slots: number
	) {
		this.scratch = [new Int32Array(slots * 32), new Int32Array(slots * 32)];
		this.cover = new Int32Array(slots * 32);
	}

	runOf(map: Map<number, Run>, id: number, key: Omit<SummaryKey, 'fy'>, geo_level: GeoLevel, geo: string, practice_code: string): Run {
		let run = map.get(id);
		if (run) return run;
		const slots = this.slots;
		run = {
			key,
			geo_level,
			geo,
			practice_code,
			touched: new Int32Array(slots),
			first: slots,
			end: 0,
			sums: new Float64Array(slots * SLOTS),
			parents: [],
			op: -1,
			opRow: 0,
			opFirst: 0,
			opEnd: 0,
			index: this.runs.length,
			cellAt: new Int32Array(slots).fill(-1),
			coverOp: -1,
			coverRow: 0
		};
		this.runs.push(run);
		map.set(id, run);
		return run;
	}

	combo(districtId: number, b: number, c: number): Combo {
		const id = (districtId * 2 + b) * 2 + c;
		let combo = this.combos.get(id);
		if (!combo) {
			combo = {
				key: { district_id: districtId, fy_basis: FY_BASES[b], basis: BASES[c] },
				county: new Map(),
				huc8: new Map(),
				countyAll: new Map(),
				hucAll: new Map(),
				districtPractice: new Map(),
				districtAll: new Map()
			};
			this.combos.set(id, combo);
		}
		return combo;
	}

	/** A fact's county × practice run (made with its coarser runs when new). */
	countyRun(combo: Combo, f: CellFact, practice: number, place: number): Run {
		const id = place * PRACTICES + practice;
		let run = combo.county.get(id);
		if (!run) {
			run = this.runOf(combo.county, id, combo.key, 'county', f.county_fips, f.practice_code);
			run.parents.push(
				this.runOf(combo.countyAll, place, combo.key, 'county', f.county_fips, '*'),
				this.runOf(combo.districtPractice, practice, combo.key, 'district', '', f.practice_code),
				this.runOf(combo.districtAll, 0, combo.key, 'district', '', '*')
			);
		}
		return run;
	}

	/** A fact's HUC-8 × practice run (made with its coarser run when new). */
	hucRun(combo: Combo, f: CellFact, practice: number, place: number): Run {
		const id = place * PRACTICES + practice;
		let run = combo.huc8.get(id);
		if (!run) {
			const huc = f.huc8 ?? '';
			run = this.runOf(combo.huc8, id, combo.key, 'huc8', huc, f.practice_code);
			run.parents.push(this.runOf(combo.hucAll, place, combo.key, 'huc8', huc, '*'));
		}
		return run;
	}

	practiceOf(f: CellFact): number {
		const practice = this.practices.of(f.practice_code);
		if (practice >= PRACTICES) throw new Error('too many practice codes in one change');
		return practice;
	}

	/** Sets the amounts a fact adds: `sign` × its amounts, and `practices` practices. */
	setAmounts(f: CellFact, sign: number, practices: number): void {
		// In AMOUNTS order, written out (a keyed read per amount would cost more than the rest of the loop).
		const a = this.amounts;
		a[0] = practices;
		a[1] = sign * f.acres;
		a[2] = sign * f.cost;
		a[3] = sign * f.cost_share;
		a[4] = sign * f.n_mean;
		a[5] = sign * f.n_low;
		a[6] = sign * f.n_high;
		a[7] = sign * f.p_mean;
		a[8] = sign * f.p_low;
		a[9] = sign * f.p_high;
	}

	/**
	 * Adds the current amounts of a fact to its two finest runs over every FY it counts in and, unless `op` is
	 * -1, counts it (side 0: before, 1: after) for operation `op` in those runs and their coarser ones.
	 */
	addFact(f: CellFact, op: number, side: number): void {
		const practice = this.practiceOf(f);
		const county = this.places.of(f.county_fips);
		const huc = this.places.of(f.huc8 ?? '');
		for (let b = 0; b < 2; b++) {
			const span = b === 0 ? f.state : f.federal;
			for (let c = 0; c < 2; c++) {
				if (c === 1 && (span.first === null || span.last === null)) continue;
				const start = (c === 0 ? span.installed : (span.first as number)) - this.lo;
				const end = (c === 0 ? span.installed : (span.last as number)) - this.lo + 1;
				const combo = this.combo(f.district_id, b, c);
				const countyRun = this.countyRun(combo, f, practice, county);
				const hucRun = this.hucRun(combo, f, practice, huc);
				this.addSpan(countyRun, start, end);
				this.addSpan(hucRun, start, end);
				if (op < 0) continue;
				this.countOp(countyRun, op, side, start, end);
				this.countOp(hucRun, op, side, start, end);
				for (const p of countyRun.parents) this.countOp(p, op, side, start, end);
				this.countOp(hucRun.parents[0], op, side, start, end);
			}
		}
	}

	/** Adds the current amounts to a run over FY indexes start..end - 1. */
	addSpan(run: Run, start: number, end: number): void {
		if (start < run.first) run.first = start;
		if (end + 1 > run.end) run.end = end + 1;
		run.touched[start]++;
		run.touched[end]--;
		const sums = run.sums;
		const amounts = this.amounts;
		for (let k = 0; k < SLOTS; k++) {
			sums[start * SLOTS + k] += amounts[k];
			sums[end * SLOTS + k] -= amounts[k];
		}
	}

	/** Counts one of operation `op`'s facts (side 0: before, 1: after) in a run over FY indexes start..end - 1. */
	countOp(run: Run, op: number, side: number, start: number, end: number): void {
		if (run.op !== op) {
			run.op = op;
			run.opRow = this.scratchRows++;
			run.opFirst = start;
			run.opEnd = end + 1;
			if (this.scratchRows * this.slots > this.scratch[0].length) {
				const grow = (s: Int32Array) => {
					const grown = new Int32Array(s.length * 2);
					grown.set(s);
					return grown;
				};
				this.scratch = [grow(this.scratch[0]), grow(this.scratch[1])];
			}
			this.opRuns.push(run);
		} else {
			if (start < run.opFirst) run.opFirst = start;
			if (end + 1 > run.opEnd) run.opEnd = end + 1;
		}
		const counts = this.scratch[side];
		const at = run.opRow * this.slots;
		counts[at + start]++;
		counts[at + end]--;
	}

	/** Reads the counts of the operation just counted, FY by FY, keeping [run, FY, packed counts] where it
	 * enters or leaves a cell; clears the scratch rows. */
	readOperation(op: number, flips: number[]): void {
		const [was, is] = this.scratch;
		const slots = this.slots;
		for (const run of this.opRuns) {
			const at = run.opRow * slots;
			let b = 0;
			let a = 0;
			for (let i = at + run.opFirst; i < at + run.opEnd; i++) {
				b += was[i];
				a += is[i];
				was[i] = 0;
				is[i] = 0;
				if ((b === 0) !== (a === 0)) flips.push(run.index, i - at, b * OPS_SIDE + a);
			}
			run.op = -1;
		}
		this.opRuns.length = 0;
		this.scratchRows = 0;
	}

	/** Gives a run a coverage row for operation `op` (finish). */
	coverFor(run: Run, op: number): void {
		if (run.coverOp === op) return;
		run.coverOp = op;
		run.coverRow = this.covered.length;
		this.covered.push(run);
		if (this.covered.length * this.slots > this.cover.length) {
			const grown = new Int32Array(this.cover.length * 2);
			grown.set(this.cover);
			this.cover = grown;
		}
	}

	/** Marks FY indexes from..to (inclusive) of a run as covered, when it has a coverage row for `op`. */
	mark(run: Run | undefined, op: number, from: number, to: number): void {
		if (!run || run.coverOp !== op) return;
		const at = run.coverRow * this.slots;
		this.cover[at + from]++;
		this.cover[at + to + 1]--;
	}

	/** Marks where one other record of operation `op` counts, in the runs that have a coverage row for it. */
	markOther(g: CellFact, op: number): void {
		const practice = this.practices.ids.get(g.practice_code);
		const county = this.places.ids.get(g.county_fips);
		const huc = this.places.ids.get(g.huc8 ?? '');
		const { lo, slots } = this;
		const hi = lo + slots - 2;
		for (let b = 0; b < 2; b++) {
			const span = b === 0 ? g.state : g.federal;
			for (let c = 0; c < 2; c++) {
				if (c === 1 && (span.first === null || span.last === null)) continue;
				const combo = this.combos.get((g.district_id * 2 + b) * 2 + c);
				if (!combo) continue;
				// The FYs it counts in, within those of the change.
				const from = Math.max(c === 0 ? span.installed : (span.first as number), lo) - lo;
				const to = Math.min(c === 0 ? span.installed : (span.last as number), hi) - lo;
				if (from > to) continue;
				this.mark(combo.districtAll.get(0), op, from, to);
				if (practice !== undefined) this.mark(combo.districtPractice.get(practice), op, from, to);
				if (county !== undefined) {
					this.mark(combo.countyAll.get(county), op, from, to);
					if (practice !== undefined) this.mark(combo.county.get(county * PRACTICES + practice), op, from, to);
				}
				if (huc !== undefined) {
					this.mark(combo.hucAll.get(huc), op, from, to);
					if (practice !== undefined) this.mark(combo.huc8.get(huc * PRACTICES + practice), op, from, to);
				}
			}
		}
	}

	/** Adds up the coverage rows (differences to counts). */
	sumCover(): void {
		const slots = this.slots;
		const cover = this.cover;
		for (const run of this.covered) {
			const at = run.coverRow * slots;
			for (let i = at + 1; i < at + slots; i++) cover[i] += cover[i - 1];
		}
	}

	clearCover(): void {
		for (const run of this.covered) {
			this.cover.fill(0, run.coverRow * this.slots, (run.coverRow + 1) * this.slots);
			run.coverOp = -1;
		}
		this.covered.length = 0;
	}
}

/**
 * What replacing the facts `before` by the facts `after` (the same records, old and new footprints; a new
 * record has no `before`, a removed one no `after`), and changing the amounts of the records in
 * `amountChanges` (facts whose places and FYs stay, with new minus old amounts as amounts), adds to each
 * cell: practices and amounts exactly, and the change in distinct operations. An operation appears in or
 * leaves a cell only when the changed records of that operation go from none to some counting in it (or
 * back) — and then only if no other record of the operation counts there, which is why `operations` lists
 * the operations to look up and `finish` takes the facts of their unchanged records. Cells whose delta is
 * all zeros are left out.
 *
 * Amounts: a fact adds to its two finest cells (county × practice and HUC-8 × practice) over all its FYs at
 * once — each cell is kept as a run of FYs holding differences between consecutive FYs, so a fact costs the
 * same whatever the length of its span — and the coarser levels are the runs merged. Operations: the facts
 * are taken one operation at a time, their [before, after] counts kept as differences in a scratch row per
 * cell (all six levels), and each row is read off once that operation is done; only the FYs where the
 * operation enters or leaves the cell are kept. The rows are read off the runs at the end. `finish` takes
 * the other records one operation at a time too, marks where they count in the cells that operation enters
 * or leaves (the same way), and moves each such cell's distinct operations unless one of them counts there.
 */
export function cellDeltas(before: Iterable<CellFact>, after: Iterable<CellFact>, amountChanges: Iterable<CellFact> = []): PendingDeltas {
	const sides: [CellFact[], CellFact[]] = [[...before], [...after]];
	const reamounted = [...amountChanges];
	// The FYs any fact counts in.
	let lo = Infinity;
	let hi = -Infinity;
	for (const facts of [...sides, reamounted])
		for (const f of facts)
			for (const fb of FY_BASES) {
				const s = f[fb];
				lo = Math.min(lo, s.installed, s.first ?? Infinity);
				hi = Math.max(hi, s.installed, s.last ?? -Infinity);
			}
	// Differences per FY, with room for the one after the last (none without facts).
	const w = new DeltaRuns(lo, lo <= hi ? hi - lo + 2 : 0);
	const operations = new Numbering();
	const operationOf: OperationQuestion[] = [];

	// Every fact, numbered by operation (so each operation's facts can be taken together).
	const all: CellFact[] = [];
	const opOfFact: number[] = [];
	for (const facts of sides)
		for (const f of facts) {
			const op = operations.of(`${f.district_id}|${f.operation_key}`);
			if (op === operationOf.length) operationOf.push({ district_id: f.district_id, operation_key: f.operation_key });
			all.push(f);
			opOfFact.push(op);
		}
	const beforeCount = sides[0].length;
	// Counting sort of the facts by operation.
	const opStart = new Int32Array(operationOf.length + 1);
	for (const op of opOfFact) opStart[op + 1]++;
	for (let i = 0; i < operationOf.length; i++) opStart[i + 1] += opStart[i];
	const byOp = new Int32Array(all.length);
	const fill = opStart.slice(0, operationOf.length);
	for (let i = 0; i < all.length; i++) byOp[fill[opOfFact[i]]++] = i;

	// Records whose places and FYs stay and whose amounts change: their amounts' change only (no practice or
	// operation enters or leaves any cell).
	for (const f of reamounted) {
		w.setAmounts(f, 1, 0);
		w.addFact(f, -1, 0);
	}
	// The other facts, one operation at a time.
	/** Per operation: [run index, FY index, packed counts] of each cell it enters or leaves, flat. */
	const flipsOf = new Map<number, number[]>();
	for (let op = 0; op < operationOf.length; op++) {
		for (let n = opStart[op]; n < opStart[op + 1]; n++) {
			const i = byOp[n];
			const f = all[i];
			const side = i < beforeCount ? 0 : 1;
			const sign = side === 0 ? -1 : 1;
			w.setAmounts(f, sign, sign);
			w.addFact(f, op, side);
		}
		// This operation is done: keep where it enters or leaves a cell.
		const flips: number[] = [];
		w.readOperation(op, flips);
		if (flips.length > 0) flipsOf.set(op, flips);
	}
	// Coarser runs' amounts: each the sum of its finer runs'.
	for (const run of w.runs) {
		const { first, end } = run;
		for (const into of run.parents) {
			if (first < into.first) into.first = first;
			if (end > into.end) into.end = end;
			for (let i = first; i < end; i++) into.touched[i] += run.touched[i];
			for (let i = first * SLOTS; i < end * SLOTS; i++) into.sums[i] += run.sums[i];
		}
	}
	// The rows (FY by FY, adding up the differences).
	const cells: CellRow[] = [];
	for (const run of w.runs) {
		let touched = 0;
		const sums = new Float64Array(SLOTS);
		for (let i = run.first; i < run.end; i++) {
			touched += run.touched[i];
			for (let k = 0; k < SLOTS; k++) sums[k] += run.sums[i * SLOTS + k];
			if (touched === 0) continue;
			run.cellAt[i] = cells.length;
			cells.push({
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
			});
		}
	}
	return {
		operations: [...flipsOf.keys()].map((op) => operationOf[op]),
		finish(others) {
			// The asked operations' other records, by operation.
			const othersOf = new Map<number, CellFact[]>();
			for (const f of others) {
				const op = operations.ids.get(`${f.district_id}|${f.operation_key}`);
				if (op === undefined || !flipsOf.has(op)) continue;
				const list = othersOf.get(op);
				if (list) list.push(f);
				else othersOf.set(op, [f]);
			}
			// One operation at a time: where its other records count (in the cells it enters or leaves, as
			// differences per FY in a coverage row per cell, then added up), then each flip that no other record
			// covers moves the cell's distinct operations.
			for (const [op, flips] of flipsOf) {
				const mine = othersOf.get(op);
				if (mine) {
					for (let j = 0; j < flips.length; j += 3) w.coverFor(w.runs[flips[j]], op);
					for (const g of mine) w.markOther(g, op);
					w.sumCover();
				}
				for (let j = 0; j < flips.length; j += 3) {
					const run = w.runs[flips[j]];
					const i = flips[j + 1];
					if (mine && w.cover[run.coverRow * w.slots + i] > 0) continue;
					cells[run.cellAt[i]].operations += flips[j + 2] % OPS_SIDE > 0 ? 1 : -1;
				}
				w.clearCover();
			}
			return cells.filter((row) => row.practices !== 0 || row.operations !== 0 || AMOUNTS.some((k) => row[k] !== 0));
		}
	};
}
