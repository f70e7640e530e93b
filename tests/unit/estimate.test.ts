// Estimates per record. The formula and the stacking rule are the product's own (product brief,
// "Estimated reduction"; issue 5): lb/yr = credited acres × baseline × efficiency; stacked practices
// combine as 1 − Π(1 − eᵢ). Numbers used: efficiencies of the default method (Iowa NRS science assessment,
// ISU 2013/2017: bioreactor 43 % [S] SD 21 [M]; cereal rye 31 % SD 29 [S]; drainage water management 33 %
// [S] SD 32 [M]) and the Illinois NLRS (2015) statewide baseline, 10 lb N and 1.4 lb P per acre per year [S].
// Expected values are worked by hand from those published numbers, not from the code.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
	apportion,
	combineEfficiencies,
	efficiencyRange,
	estimateFieldGroup,
	estimateRecord,
	estimateRecords,
	groupByField,
	sumRanges,
	type EstimateInput
} from '../../src/lib/domain/estimate';
import { DEFAULT_METHOD, type ReductionMethod } from '../../src/lib/domain/reduction-method';

const bio: EstimateInput = {
	id: 1,
	practice_code: '605',
	county_fips: '19169',
	district_id: 7,
	field_id: 'F-1',
	installed_on: '2020-05-01',
	drainage_area_acres: '50.00',
	extent_acres: null
};
const rye: EstimateInput = {
	id: 2,
	practice_code: '340',
	county_fips: '19169',
	district_id: 7,
	field_id: 'F-1',
	installed_on: '2020-10-10',
	extent_acres: 50
};
const dwm: EstimateInput = {
	id: 3,
	practice_code: '554',
	county_fips: '19169',
	district_id: 7,
	field_id: 'F-1',
	installed_on: '2019-04-01',
	drainage_area_acres: 50
};

describe('single record', () => {
	it('bioreactor on 50 drained acres: 50 × 10 lb N × 43 % = 215 lb N/yr; low 50 × 10 × 22 % = 110, high 50 × 10 × 64 % = 320', () => {
		const e = estimateRecord({ ...bio, field_id: null }, DEFAULT_METHOD);
		expect(e.counted).toBe(true);
		expect(e.credited_basis).toBe('drainage_area_acres');
		expect(e.credited_acres).toBe(50);
		expect(e.n_lb.mean).toBeCloseTo(215, 9);
		expect(e.n_lb.low).toBeCloseTo(110, 9);
		expect(e.n_lb.high).toBeCloseTo(320, 9);
		expect(e.p_lb).toEqual({ mean: 0, low: 0, high: 0 });
		expect(e.stacked_with).toEqual([]);
		expect(e.field_combined).toBeNull();
		expect(e.method_version).toBe('ia-2017.1');
	});

	it('cereal rye on 40 acres (in-field, extent): N 40 × 10 × 31 % = 124 (low 40 × 10 × 2 % = 8, high 40 × 10 × 60 % = 240); P 40 × 1.4 × 29 % = 16.24 (low clipped to 0)', () => {
		const e = estimateRecord({ ...rye, field_id: null, extent_acres: '40', drainage_area_acres: '999' }, DEFAULT_METHOD);
		expect(e.credited_basis).toBe('extent_acres');
		expect(e.credited_acres).toBe(40);
		expect(e.n_lb.mean).toBeCloseTo(124, 9);
		expect(e.n_lb.low).toBeCloseTo(8, 9);
		expect(e.n_lb.high).toBeCloseTo(240, 9);
		// P: 29 % with SD 37 (recalled) → low max(0, −8 %) = 0, high 66 %
		expect(e.p_lb.mean).toBeCloseTo(16.24, 9);
		expect(e.p_lb.low).toBe(0);
		expect(e.p_lb.high).toBeCloseTo(40 * 1.4 * 0.66, 9);
	});

	it('low/high clip to [0, 1]', () => {
		expect(
			efficiencyRange({ mean: 0.91, sd: 0.2, applies_to: 'concentration', citation: DEFAULT_METHOD.baseline.statewide.citation })
		).toEqual({
			mean: 0.91,
			low: expect.closeTo(0.71, 12),
			high: 1
		});
		expect(efficiencyRange(null)).toEqual({ mean: 0, low: 0, high: 0 });
		expect(efficiencyRange({ mean: 0.85, sd: null, applies_to: 'load', citation: DEFAULT_METHOD.baseline.statewide.citation })).toEqual({
			mean: 0.85,
			low: 0.85,
			high: 0.85
		});
	});

	it('a county override baseline is used when the method has one', () => {
		const m: ReductionMethod = {
			...DEFAULT_METHOD,
			baseline: {
				...DEFAULT_METHOD.baseline,
				counties: [{ county_fips: '19169', n_lb_per_ac_yr: 25, p_lb_per_ac_yr: 2, citation: DEFAULT_METHOD.baseline.statewide.citation }]
			}
		};
		const e = estimateRecord({ ...bio, field_id: null }, m);
		expect(e.baseline).toEqual({ n_lb_per_ac_yr: 25, p_lb_per_ac_yr: 2, source: 'county' });
		expect(e.n_lb.mean).toBeCloseTo(50 * 25 * 0.43, 9);
	});

	it('withdrawn records stop counting; so do records without credited acres or practices outside the method', () => {
		expect(estimateRecord({ ...bio, status: 'withdrawn', withdrawn_on: '2024-01-01' }, DEFAULT_METHOD)).toMatchObject({
			counted: false,
			reason: 'withdrawn',
			n_lb: { mean: 0, low: 0, high: 0 }
		});
		expect(estimateRecord({ ...bio, drainage_area_acres: null }, DEFAULT_METHOD).reason).toBe('no-credited-acres');
		expect(estimateRecord({ ...bio, practice_code: '999' }, DEFAULT_METHOD).reason).toBe('practice-not-in-method');
	});

	it('a practice the method credits 0 is counted with 0 lb (acres still count)', () => {
		const e = estimateRecord({ id: 9, practice_code: '587', county_fips: '19169', drainage_area_acres: 30 }, DEFAULT_METHOD);
		expect(e).toMatchObject({ counted: true, credited_acres: 30, n_lb: { mean: 0, low: 0, high: 0 } });
	});
});

describe('stacking on one field: 1 − Π(1 − eᵢ), apportioned by own efficiency', () => {
	it('bioreactor 43 % + cereal rye 31 % on the same 50 acres: combined 1 − 0.57 × 0.69 = 60.67 %, shared 43 : 31', () => {
		const [b, r] = estimateFieldGroup([bio, rye], DEFAULT_METHOD);
		const combined = 1 - 0.57 * 0.69; // 0.6067
		expect(b.field_combined!.n.mean).toBeCloseTo(combined, 12);
		expect(b.credited_efficiency.n.mean).toBeCloseTo((combined * 0.43) / 0.74, 12);
		expect(r.credited_efficiency.n.mean).toBeCloseTo((combined * 0.31) / 0.74, 12);
		expect(b.n_lb.mean + r.n_lb.mean).toBeCloseTo(50 * 10 * combined, 9); // 303.35 lb, not 370 (= 215 + 155 summed)
		expect(b.stacked_with).toEqual(['2']);
		expect(r.stacked_with).toEqual(['1']);
		// low: bioreactor 22 %, rye 2 % → 1 − 0.78 × 0.98 = 23.56 %
		expect(b.n_lb.low + r.n_lb.low).toBeCloseTo(50 * 10 * (1 - 0.78 * 0.98), 9);
		// high: 64 % and 60 % → 1 − 0.36 × 0.40 = 85.6 %
		expect(b.n_lb.high + r.n_lb.high).toBeCloseTo(50 * 10 * (1 - 0.36 * 0.4), 9);
		// P: only rye credits P, so it keeps its own 29 %
		expect(r.p_lb.mean).toBeCloseTo(50 * 1.4 * 0.29, 9);
		expect(b.p_lb.mean).toBe(0);
	});

	it('low and high share the field’s low and high E in the mean’s proportions, so a record keeps low ≤ mean ≤ high', () => {
		const sat: EstimateInput = {
			id: 6,
			practice_code: '604',
			county_fips: '19169',
			district_id: 7,
			field_id: 'F-1',
			drainage_area_acres: 50
		};
		const [, , s] = estimateFieldGroup([rye, bio, sat], DEFAULT_METHOD);
		// mean: E = 1 − 0.69 × 0.57 × 0.50 = 0.80335, share 0.80335 × 0.50 / 1.24 = 0.32393
		expect(s.credited_efficiency.n.mean).toBeCloseTo((0.80335 * 0.5) / 1.24, 5);
		// high: E = 1 − 0.40 × 0.36 × 0.37 = 0.94672, share 0.94672 × 0.50 / 1.24 = 0.38175 (its own high
		// 0.63 of Σ 1.87 would give 0.31895, below its mean share)
		expect(s.credited_efficiency.n.high).toBeCloseTo((0.94672 * 0.5) / 1.24, 5);
		// low: E = 1 − 0.98 × 0.78 × 0.63 = 0.518428 (rye 2 %, bioreactor 22 %, saturated buffer 37 %), share × 0.50 / 1.24
		expect(s.credited_efficiency.n.low).toBeCloseTo((0.518428 * 0.5) / 1.24, 5);
		expect(s.n_lb.low).toBeLessThanOrEqual(s.n_lb.mean);
		expect(s.n_lb.mean).toBeLessThanOrEqual(s.n_lb.high);
	});

	it('three practices: 1 − 0.57 × 0.69 × 0.67', () => {
		const res = estimateFieldGroup([bio, rye, dwm], DEFAULT_METHOD);
		const total = sumRanges(res.map((x) => x.n_lb)).mean;
		expect(total).toBeCloseTo(500 * (1 - 0.57 * 0.69 * 0.67), 9);
	});

	it('a withdrawn practice leaves the stack: the others get their full share back', () => {
		const res = estimateFieldGroup([bio, { ...rye, status: 'withdrawn', withdrawn_on: '2023-03-01' }], DEFAULT_METHOD);
		expect(res[0].n_lb.mean).toBeCloseTo(215, 9);
		expect(res[0].stacked_with).toEqual([]);
		expect(res[1].counted).toBe(false);
	});

	it('with a period, only practices in service then stack (cover crop lifespan 1 year, recalled)', () => {
		// FY2024 on the state July basis: 2023-07-01 – 2024-06-30; the 2020 rye planting ran out in 2021
		const res = estimateFieldGroup([bio, rye], DEFAULT_METHOD, { period: { first: '2023-07-01', last: '2024-06-30' } });
		expect(res[0].n_lb.mean).toBeCloseTo(215, 9);
		expect(res[1]).toMatchObject({ counted: false, reason: 'not-in-service' });
		const fy2021 = estimateFieldGroup([bio, rye], DEFAULT_METHOD, { period: { first: '2020-07-01', last: '2021-06-30' } });
		expect(fy2021.every((x) => x.counted)).toBe(true);
	});

	it('groups by district and field; records without a field stand alone; results keep input order', () => {
		const other = { ...rye, id: 4, district_id: 8 }; // same field id, other district: not stacked
		const alone = { ...rye, id: 5, field_id: null };
		expect(groupByField([bio, other, rye, alone]).map((g) => g.map((x) => x.id))).toEqual([[1, 2], [4], [5]]);
		const res = estimateRecords([bio, other, rye, alone], DEFAULT_METHOD);
		expect(res.map((x) => x.record_id)).toEqual(['1', '4', '2', '5']);
		expect(res[1].stacked_with).toEqual([]);
		expect(res[0].stacked_with).toEqual(['2']);
	});
});

describe('stacking properties (fast-check)', () => {
	const effs = fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: 1, maxLength: 8 });

	it('the combined efficiency stays within [max eᵢ, min(1, Σeᵢ)]: never above 1, never more than the sum', () => {
		fc.assert(
			fc.property(effs, (es) => {
				const c = combineEfficiencies(es);
				const sum = es.reduce((a, b) => a + b, 0);
				return c <= 1 + 1e-12 && c <= sum + 1e-12 && c >= Math.max(...es) - 1e-12 && c >= 0;
			})
		);
	});

	it('the shares sum to the combined efficiency and each is at most its own efficiency', () => {
		fc.assert(
			fc.property(effs, (es) => {
				const shares = apportion(es);
				const total = shares.reduce((a, b) => a + b, 0);
				return Math.abs(total - combineEfficiencies(es)) < 1e-12 && shares.every((s, i) => s <= es[i] + 1e-12 && s >= 0);
			})
		);
	});

	it('on any stacked field of the default method, every record keeps low ≤ mean ≤ high and the shares add up to each E', () => {
		const codes = DEFAULT_METHOD.practices.map((p) => p.practice_code);
		fc.assert(
			fc.property(fc.array(fc.constantFrom(...codes), { minLength: 2, maxLength: 5 }), (picked) => {
				const group: EstimateInput[] = picked.map((code, i) => ({
					id: i + 1,
					practice_code: code,
					county_fips: '19169',
					district_id: 7,
					field_id: 'F-prop',
					extent_acres: 40,
					drainage_area_acres: 40
				}));
				const res = estimateFieldGroup(group, DEFAULT_METHOD);
				for (const k of ['n', 'p'] as const) {
					for (const r of res) {
						const e = r.credited_efficiency[k];
						if (!(e.low <= e.mean + 1e-12 && e.mean <= e.high + 1e-12)) return false;
					}
					for (const part of ['mean', 'low', 'high'] as const) {
						const total = res.reduce((a, r) => a + r.credited_efficiency[k][part], 0);
						if (Math.abs(total - combineEfficiencies(res.map((r) => r.efficiency[k][part]))) > 1e-12) return false;
					}
				}
				return true;
			})
		);
	});

	it('order does not matter', () => {
		fc.assert(
			fc.property(effs, fc.integer(), (es, seed) => {
				const perm = es.map((e, i) => ({ e, k: Math.sin(seed + i) })).sort((a, b) => a.k - b.k);
				const shuffled = perm.map((x) => x.e);
				const byValue = (xs: number[], ss: number[]) => new Map(xs.map((x, i) => [x, ss[i]]));
				const a = byValue(es, apportion(es));
				const b = byValue(shuffled, apportion(shuffled));
				return (
					Math.abs(combineEfficiencies(es) - combineEfficiencies(shuffled)) < 1e-12 &&
					[...a].every(([x, s]) => Math.abs(s - (b.get(x) ?? NaN)) < 1e-12)
				);
			})
		);
	});

	const practiceArb = fc.constantFrom('605', '340', '554', '656', '604', '390', '600', '587');
	const recordsArb = fc.array(fc.record({ practice_code: practiceArb, acres: fc.integer({ min: 1, max: 500 }), withdrawn: fc.boolean() }), {
		minLength: 1,
		maxLength: 6
	});
	const toInputs = (rs: { practice_code: string; acres: number; withdrawn: boolean }[]): EstimateInput[] =>
		rs.map((r, i) => ({
			id: i + 1,
			practice_code: r.practice_code,
			county_fips: '19169',
			district_id: 1,
			field_id: 'F',
			installed_on: '2020-01-01',
			status: r.withdrawn ? 'withdrawn' : 'installed',
			withdrawn_on: r.withdrawn ? '2022-01-01' : null,
			extent_acres: r.acres,
			drainage_area_acres: r.acres
		}));

	// low/high are scenarios: every practice on the field at its low (or high) efficiency. The FIELD's totals
	// are ordered low ≤ mean ≤ high; one record's share need not be (its partners may gain more in the high
	// scenario than it does), which is the apportioning rule applied literally to each scenario.
	it('on equal acres, a field’s total never exceeds acres × baseline, never exceeds the unstacked sum, and low ≤ mean ≤ high', () => {
		fc.assert(
			fc.property(recordsArb, fc.integer({ min: 1, max: 500 }), (rs, acres) => {
				const inputs = toInputs(rs.map((r) => ({ ...r, acres })));
				const res = estimateFieldGroup(inputs, DEFAULT_METHOD);
				const alone = inputs.map((x) => estimateRecord({ ...x, field_id: null }, DEFAULT_METHOD));
				for (const k of ['n_lb', 'p_lb'] as const) {
					const base = k === 'n_lb' ? 10 : 1.4;
					for (const part of ['mean', 'low', 'high'] as const) {
						const total = res.reduce((a, x) => a + x[k][part], 0);
						const unstacked = alone.reduce((a, x) => a + x[k][part], 0);
						if (total > acres * base + 1e-9 || total > unstacked + 1e-9) return false;
					}
					const t = sumRanges(res.map((x) => x[k]));
					if (!(t.low <= t.mean + 1e-9 && t.mean <= t.high + 1e-9)) return false;
				}
				return res.every((x) => (x.counted ? true : x.n_lb.mean === 0 && x.p_lb.mean === 0));
			})
		);
	});

	it('the result for each record does not depend on the order of the group', () => {
		fc.assert(
			fc.property(recordsArb, (rs) => {
				const inputs = toInputs(rs);
				const fwd = new Map(estimateFieldGroup(inputs, DEFAULT_METHOD).map((x) => [x.record_id, x.n_lb.mean]));
				const rev = new Map(estimateFieldGroup([...inputs].reverse(), DEFAULT_METHOD).map((x) => [x.record_id, x.n_lb.mean]));
				return [...fwd].every(([id, v]) => Math.abs(v - rev.get(id)!) < 1e-9);
			})
		);
	});
});
