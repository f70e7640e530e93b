// Summary cells from record facts: for every fiscal year a record counts in (installed and in-service
// bases, state and federal FYs), its amounts are added to six cells of its district — county × practice,
// county, HUC-8 × practice, HUC-8, practice, all practices — and its operation to those cells' sets of
// distinct operations. Amounts are integers (cents, 1/10,000 acre, millionths of a pound) so every sum is
// exact and any order of adding gives the same cells: what a batch refresh computes for a few keys equals
// what a full rebuild computes for all of them.

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
			acres: 0,
			cost: 0,
			cost_share: 0,
			n_mean: 0,
			n_low: 0,
			n_high: 0,
			p_mean: 0,
			p_low: 0,
			p_high: 0
		},
		ops: new Set()
	};
}

function add(into: Acc, from: Acc): void {
	const r = into.row;
	const f = from.row;
	r.practices += f.practices;
	r.acres += f.acres;
	r.cost += f.cost;
	r.cost_share += f.cost_share;
	r.n_mean += f.n_mean;
	r.n_low += f.n_low;
	r.n_high += f.n_high;
	r.p_mean += f.p_mean;
	r.p_low += f.p_low;
	r.p_high += f.p_high;
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
		for (let b = 0; b < 2; b++) {
			const fy_basis = FY_BASES[b];
			const span = f[fy_basis];
			for (let c = 0; c < 2; c++) {
				const basis = BASES[c];
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
					let entry = byKey.get(num);
					if (!entry) {
						const key: SummaryKey = { district_id: f.district_id, fy_basis, basis, fy };
						if (only && !only.has(summaryKeyId(key))) continue;
						entry = { key, county: new Map(), huc8: new Map() };
						byKey.set(num, entry);
					}
					let acc = entry.county.get(countyCell);
					if (!acc) entry.county.set(countyCell, (acc = newAcc(entry.key, 'county', f.county_fips, f.practice_code)));
					const r = acc.row;
					r.practices++;
					r.acres += f.acres;
					r.cost += f.cost;
					r.cost_share += f.cost_share;
					r.n_mean += f.n_mean;
					r.n_low += f.n_low;
					r.n_high += f.n_high;
					r.p_mean += f.p_mean;
					r.p_low += f.p_low;
					r.p_high += f.p_high;
					acc.ops.add(op);
					let hacc = entry.huc8.get(hucCell);
					if (!hacc) entry.huc8.set(hucCell, (hacc = newAcc(entry.key, 'huc8', huc, f.practice_code)));
					const h = hacc.row;
					h.practices++;
					h.acres += f.acres;
					h.cost += f.cost;
					h.cost_share += f.cost_share;
					h.n_mean += f.n_mean;
					h.n_low += f.n_low;
					h.n_high += f.n_high;
					h.p_mean += f.p_mean;
					h.p_low += f.p_low;
					h.p_high += f.p_high;
					hacc.ops.add(op);
				}
			}
		}
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
