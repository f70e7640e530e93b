// Summary cells from record facts, checked against a plain reference: every (fact, FY) listed at each of the
// six levels, then grouped. Random facts (fast-check) plus a worked example.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
	aggregateCells,
	cellDeltas,
	cellId,
	countedIn,
	keysOf,
	operationsMoved,
	summaryKeyId,
	type CellFact,
	type CellRow
} from '$lib/domain/rollup-cells';

function reference(facts: CellFact[]): CellRow[] {
	const groups = new Map<string, { row: CellRow; ops: Set<string> }>();
	for (const f of facts) {
		for (const [fy_basis, basis, fy] of countedIn(f)) {
			const levels: [CellRow['geo_level'], string, string][] = [
				['county', f.county_fips, f.practice_code],
				['county', f.county_fips, '*'],
				['huc8', f.huc8 ?? '', f.practice_code],
				['huc8', f.huc8 ?? '', '*'],
				['district', '', f.practice_code],
				['district', '', '*']
			];
			for (const [geo_level, geo, practice_code] of levels) {
				const id = [f.district_id, fy_basis, basis, fy, geo_level, geo, practice_code].join('|');
				let g = groups.get(id);
				if (!g) {
					g = {
						row: {
							fy_basis,
							basis,
							geo_level,
							fy,
							district_id: f.district_id,
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
					groups.set(id, g);
				}
				g.row.practices += 1;
				for (const k of ['acres', 'cost', 'cost_share', 'n_mean', 'n_low', 'n_high', 'p_mean', 'p_low', 'p_high'] as const)
					g.row[k] += f[k];
				g.ops.add(f.operation_key);
			}
		}
	}
	return [...groups.values()].map((g) => ({ ...g.row, operations: g.ops.size }));
}

const rowId = (r: CellRow) => `${r.district_id}|${r.fy_basis}|${r.basis}|${r.fy}|${r.geo_level}|${r.geo}|${r.practice_code}`;
const sortRows = (rows: CellRow[]) => [...rows].sort((a, b) => (rowId(a) < rowId(b) ? -1 : rowId(a) > rowId(b) ? 1 : 0));

const fact = fc
	.record({
		district_id: fc.constantFrom(1, 2),
		county_fips: fc.constantFrom('19001', '19003'),
		huc8: fc.constantFrom('07080105', '07100006', null),
		practice_code: fc.constantFrom('605', '340', '554'),
		operation_key: fc.constantFrom('a', 'b', 'c', ''),
		installed: fc.integer({ min: 2018, max: 2024 }),
		life: fc.integer({ min: 0, max: 5 }),
		withdrawnBefore: fc.boolean(),
		amounts: fc.array(fc.integer({ min: 0, max: 10_000_000 }), { minLength: 9, maxLength: 9 })
	})
	.map((r): CellFact => ({
		district_id: r.district_id,
		county_fips: r.county_fips,
		huc8: r.huc8,
		practice_code: r.practice_code,
		operation_key: r.operation_key,
		state: { installed: r.installed, first: r.withdrawnBefore ? null : r.installed, last: r.withdrawnBefore ? null : r.installed + r.life },
		federal: { installed: r.installed - (r.life % 2), first: r.installed - (r.life % 2), last: r.installed + r.life },
		acres: r.amounts[0],
		cost: r.amounts[1],
		cost_share: r.amounts[2],
		n_mean: r.amounts[3],
		n_low: r.amounts[4],
		n_high: r.amounts[5],
		p_mean: r.amounts[6],
		p_low: r.amounts[7],
		p_high: r.amounts[8]
	}));

/** The amounts of a fact (AMOUNTS without the practice count). */
const AMOUNT_KEYS = ['acres', 'cost', 'cost_share', 'n_mean', 'n_low', 'n_high', 'p_mean', 'p_low', 'p_high'] as const;

/** Where a fact counts: everything but its amounts. */
const place = (f: CellFact) => ({
	district_id: f.district_id,
	county_fips: f.county_fips,
	huc8: f.huc8,
	practice_code: f.practice_code,
	operation_key: f.operation_key,
	state: f.state,
	federal: f.federal
});

describe('summary cells', () => {
	it('equal the plain reference for random facts', () => {
		fc.assert(
			fc.property(fc.array(fact, { maxLength: 40 }), (facts) => {
				expect(sortRows(aggregateCells(facts))).toEqual(sortRows(reference(facts)));
			}),
			{ numRuns: 120 }
		);
	}, 60_000);

	it('restricted to some keys, equal the full result on those keys', () => {
		fc.assert(
			fc.property(fc.array(fact, { minLength: 1, maxLength: 30 }), fc.nat(), (facts, pick) => {
				const keys = keysOf(facts[pick % facts.length]);
				const only = new Set(keys.map(summaryKeyId));
				const inKeys = (r: CellRow) => only.has(summaryKeyId(r));
				expect(sortRows(aggregateCells(facts, only))).toEqual(sortRows(aggregateCells(facts).filter(inKeys)));
			}),
			{ numRuns: 80 }
		);
	}, 60_000);

	it('cells + the deltas of a change = the cells after it (inserts, updates, removals, new amounts; distinct operations)', () => {
		// Records 0..n-1 with facts before; each is kept, changed, removed, new (no fact before), or keeps its
		// places and FYs with new amounts (passed to cellDeltas as the change of its amounts).
		const change = fc.oneof(
			fc.constant({ kind: 'keep' as const }),
			fc.constant({ kind: 'remove' as const }),
			fact.map((f) => ({ kind: 'change' as const, f })),
			fact.map((f) => ({ kind: 'new' as const, f })),
			fact.map((f) => ({ kind: 'amounts' as const, f }))
		);
		fc.assert(
			fc.property(fc.array(fc.tuple(fact, change), { maxLength: 30 }), (records) => {
				const old: CellFact[] = [];
				const now: CellFact[] = [];
				const before: CellFact[] = [];
				const after: CellFact[] = [];
				const others: CellFact[] = [];
				const reamounted: CellFact[] = [];
				for (const [f, c] of records) {
					if (c.kind !== 'new') old.push(f);
					if (c.kind === 'keep') {
						now.push(f);
						others.push(f);
					} else if (c.kind === 'amounts') {
						// Same record, places and FYs; the other fact's amounts.
						const g = { ...c.f, ...place(f) };
						now.push(g);
						others.push(g);
						reamounted.push({ ...g, ...Object.fromEntries(AMOUNT_KEYS.map((k) => [k, g[k] - f[k]])) });
					} else if (c.kind === 'remove') before.push(f);
					else if (c.kind === 'new') {
						now.push(c.f);
						after.push(c.f);
					} else {
						now.push(c.f);
						before.push(f);
						after.push(c.f);
					}
				}
				const pending = cellDeltas(before, after, reamounted);
				// Only the unchanged records of the operations asked about are needed.
				const asked = new Set(pending.operations.map((o) => `${o.district_id}|${o.operation_key}`));
				// operationsMoved names every one of them (the refresh reads their records early by it).
				const moved = new Set(operationsMoved(before, after).map((o) => `${o.district_id}|${o.operation_key}`));
				for (const o of asked) expect(moved).toContain(o);
				const deltas = pending.finish(others.filter((f) => asked.has(`${f.district_id}|${f.operation_key}`)));
				const cells = new Map(aggregateCells(old).map((r) => [cellId(r), { ...r }]));
				for (const d of deltas) {
					const r = cells.get(cellId(d));
					if (!r) cells.set(cellId(d), { ...d });
					else
						for (const k of [
							'practices',
							'operations',
							'acres',
							'cost',
							'cost_share',
							'n_mean',
							'n_low',
							'n_high',
							'p_mean',
							'p_low',
							'p_high'
						] as const)
							r[k] += d[k];
				}
				const applied = [...cells.values()].filter((r) => r.practices !== 0 || r.operations !== 0);
				expect(sortRows(applied)).toEqual(sortRows(aggregateCells(now)));
			}),
			{ numRuns: 300 }
		);
	}, 60_000);

	it('operationsMoved: a change of amounts only moves no operation; a change of place or FY span does', () => {
		const f: CellFact = {
			district_id: 1,
			county_fips: '19169',
			huc8: '07080105',
			practice_code: '605',
			operation_key: 'farm-1',
			state: { installed: 2025, first: 2025, last: 2034 },
			federal: { installed: 2025, first: 2025, last: 2034 },
			acres: 500_000,
			cost: 1_200_000,
			cost_share: 0,
			n_mean: 215_000_000,
			n_low: 0,
			n_high: 0,
			p_mean: 0,
			p_low: 0,
			p_high: 0
		};
		const more = { ...f, acres: 800_000, n_mean: 344_000_000 };
		expect(operationsMoved([f], [more])).toEqual([]);
		expect(cellDeltas([f], [more]).operations).toEqual([]);
		// Two records of the farm swapping places: each place keeps one changed record.
		const g = { ...f, county_fips: '19013' };
		expect(operationsMoved([f, g], [g, f])).toEqual([]);
		expect(operationsMoved([f], [g])).toEqual([{ district_id: 1, operation_key: 'farm-1' }]);
		expect(operationsMoved([f], [{ ...f, state: { ...f.state, last: 2030 } }])).toEqual([{ district_id: 1, operation_key: 'farm-1' }]);
		expect(operationsMoved([], [f])).toEqual([{ district_id: 1, operation_key: 'farm-1' }]);
	});

	it('a worked example: two bioreactors of one farm and a cover crop of another in one county and FY', () => {
		const base = {
			district_id: 1,
			county_fips: '19169',
			huc8: '07080105',
			cost_share: 0,
			n_low: 0,
			n_high: 0,
			p_mean: 0,
			p_low: 0,
			p_high: 0
		};
		const one = { installed: 2025, first: 2025, last: 2025 };
		const facts: CellFact[] = [
			{
				...base,
				practice_code: '605',
				operation_key: 'farm-1',
				state: one,
				federal: one,
				acres: 500_000,
				cost: 1_200_000,
				n_mean: 215_000_000
			},
			{
				...base,
				practice_code: '605',
				operation_key: 'farm-1',
				state: one,
				federal: one,
				acres: 400_000,
				cost: 900_000,
				n_mean: 172_000_000
			},
			{ ...base, practice_code: '340', operation_key: 'farm-2', state: one, federal: one, acres: 800_000, cost: 240_000, n_mean: 1_000_000 }
		];
		const cells = aggregateCells(facts).filter((c) => c.fy_basis === 'state' && c.basis === 'installed');
		const get = (level: string, geo: string, practice: string) =>
			cells.find((c) => c.geo_level === level && c.geo === geo && c.practice_code === practice)!;
		expect(get('county', '19169', '605')).toMatchObject({
			practices: 2,
			operations: 1,
			acres: 900_000,
			cost: 2_100_000,
			n_mean: 387_000_000
		});
		expect(get('county', '19169', '*')).toMatchObject({ practices: 3, operations: 2, acres: 1_700_000 });
		expect(get('district', '', '*')).toMatchObject({ practices: 3, operations: 2, n_mean: 388_000_000 });
		expect(get('huc8', '07080105', '340')).toMatchObject({ practices: 1, operations: 1 });
		expect(cells).toHaveLength(9); // county, HUC-8 and district levels, each × (605, 340, all practices)
	});
});
