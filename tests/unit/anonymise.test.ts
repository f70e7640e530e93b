// Anonymisation for the research dataset. The floor is Section 1619 of the Food, Conservation, and Energy Act
// of 2008 (7 U.S.C. 8791(b)): producers' information only "in statistical or aggregate form". k = 3 and the
// 60 % dominance share are statistical-disclosure practice recalled from memory (project sources, Privacy);
// the 100-acre threshold for rounding to 5 acres is our own rule. HUC-8 = the first 8 digits of a HUC-12 is
// the Watershed Boundary Dataset's nesting of hydrologic units (USGS/NRCS, Federal Standards and Procedures
// for the National Watershed Boundary Dataset, 4th ed., 2013, §1).
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
	anonymise,
	DATASET_COLUMNS,
	fundingCategory,
	huc8Of,
	publishedCellKey,
	roundAcres,
	yearMonth,
	type SourceRecord
} from '$lib/domain/anonymise';

const pseudonym = (id: string) => `p-${id}`;

let seq = 0;
function rec(over: Partial<SourceRecord> = {}): SourceRecord {
	seq++;
	return {
		record_id: `r${seq}`,
		practice_code: '605',
		practice_name: 'Denitrifying bioreactor',
		county_fips: '19001',
		region: 'South',
		state_fips: '19',
		huc12: '070801050101',
		installed_on: '2025-08-14',
		fy_installed: 2026,
		fy_first: 2026,
		fy_last: 2035,
		credited_acres: 40.4,
		n_lb_mean: 404,
		n_lb_low: 202,
		n_lb_high: 606,
		p_lb_mean: 4.04,
		p_lb_low: 2.02,
		p_lb_high: 6.06,
		method_version: 'm1',
		funding_program: 'State cost share',
		operation_key: `op${seq}`,
		...over
	};
}

describe('value transforms', () => {
	it('rounds acres to the acre below 100 and to 5 acres from 100 up', () => {
		expect(roundAcres(0.4)).toBe(0);
		expect(roundAcres(12.5)).toBe(13);
		expect(roundAcres(99.4)).toBe(99);
		expect(roundAcres(101)).toBe(100);
		expect(roundAcres(103)).toBe(105);
		expect(roundAcres(null)).toBe(0);
	});
	it('keeps year and month only, and HUC-8 from a HUC-12', () => {
		expect(yearMonth('2025-08-14')).toEqual({ year: 2025, month: 8 });
		expect(() => yearMonth('Aug 2025')).toThrow(RangeError);
		expect(huc8Of('070801050101')).toBe('07080105');
		expect(huc8Of('0708')).toBeNull();
		expect(huc8Of(null)).toBeNull();
	});
	it('maps free-text funding programs to categories', () => {
		expect(fundingCategory('State cost share')).toBe('state');
		expect(fundingCategory('EQIP')).toBe('federal');
		expect(fundingCategory('County tax levy')).toBe('local');
		expect(fundingCategory('EQIP + state cost share')).toBe('multiple');
		expect(fundingCategory('Acme Grain grant')).toBe('other');
		expect(fundingCategory(null)).toBe('not_reported');
	});
	it('scales the estimates to the rounded acres so exact acres cannot be read back', () => {
		const { rows } = anonymise([rec(), rec(), rec()], { pseudonym });
		expect(rows[0].credited_acres).toBe(40);
		expect(rows[0].n_lb_mean).toBe(400);
		expect(rows[0].p_lb_high).toBe(6);
	});
});

describe('small cells', () => {
	it('publishes a county cell with k operations at county level, with pseudonymous ids and only the dataset columns', () => {
		const input = [rec(), rec(), rec()];
		const { rows, counts } = anonymise(input, { pseudonym });
		expect(rows.map((r) => r.area_level)).toEqual(['county', 'county', 'county']);
		expect(rows.map((r) => r.pid)).toEqual(input.map((r) => `p-${r.record_id}`));
		expect(rows[0].huc8).toBe('07080105');
		for (const row of rows) expect(Object.keys(row).sort()).toEqual([...DATASET_COLUMNS].sort());
		expect(counts).toMatchObject({ cells: 1, published_as_county: 1, suppressed: 0 });
	});
	it('counts distinct operations, not records', () => {
		const { rows, counts } = anonymise([rec({ operation_key: 'x' }), rec({ operation_key: 'x' }), rec({ operation_key: 'y' })], {
			pseudonym
		});
		expect(rows).toHaveLength(0);
		expect(counts.suppressed).toBe(1);
		expect(counts.suppressed_records).toBe(3);
	});
	it('pools small county cells into the region, then the state', () => {
		const input = [
			rec({ county_fips: '19001', region: 'South' }),
			rec({ county_fips: '19003', region: 'South' }),
			rec({ county_fips: '19005', region: 'South' }),
			rec({ county_fips: '19011', region: 'East' }),
			rec({ county_fips: '19013', region: 'West' })
		];
		const { rows, counts } = anonymise(input, { pseudonym });
		expect(rows.filter((r) => r.area_level === 'region')).toHaveLength(3);
		expect(
			rows.filter((r) => r.area_level === 'region').every((r) => r.county_fips === null && r.huc8 === null && r.region === 'South')
		).toBe(true);
		// East and West alone have 2 operations: fewer than k at the state level too → suppressed.
		expect(counts).toMatchObject({ generalised_to_region: 3, generalised_to_state: 0, suppressed: 2 });
		const withState = anonymise([...input, rec({ county_fips: '19015', region: 'North' })], { pseudonym });
		expect(withState.counts).toMatchObject({ generalised_to_region: 3, generalised_to_state: 3, suppressed: 0 });
		expect(withState.rows.filter((r) => r.area_level === 'state').every((r) => r.region === null && r.state_fips === '19')).toBe(true);
	});
	it('treats a cell dominated by one operation as small (k can be changed too)', () => {
		const input = [rec({ credited_acres: 900, n_lb_mean: 9000 }), rec({ credited_acres: 50 }), rec({ credited_acres: 50 })];
		expect(anonymise(input, { pseudonym }).counts).toMatchObject({ dominated: 1, suppressed: 1 });
		expect(anonymise(input, { pseudonym, dominance: 0.95 }).counts).toMatchObject({ published_as_county: 1 });
		expect(anonymise(input, { pseudonym, dominance: 0.95, k: 4 }).counts).toMatchObject({ suppressed: 1 });
		expect(() => anonymise(input, { pseudonym, k: 0 })).toThrow(RangeError);
	});
	it('withholds HUC-8 from a county cell when one HUC-8 group is small', () => {
		const input = [rec(), rec(), rec(), rec({ huc12: '071000040101' })];
		const { rows, counts } = anonymise(input, { pseudonym });
		expect(rows.every((r) => r.area_level === 'county' && r.huc8 === null)).toBe(true);
		expect(counts.huc8_withheld).toBe(1);
	});
});

const scenario = fc.array(
	fc.record({
		county: fc.constantFrom('19001', '19003', '19005', '19007', '19009', '19011'),
		fy: fc.integer({ min: 2024, max: 2026 }),
		practice: fc.constantFrom('605', '604', '340'),
		op: fc.integer({ min: 1, max: 12 }),
		acres: fc.double({ min: 0, max: 500, noNaN: true }),
		huc: fc.constantFrom('070801050101', '070801060101', null)
	}),
	{ maxLength: 120 }
);
const REGION: Record<string, string> = { '19001': 'A', '19003': 'A', '19005': 'B', '19007': 'B', '19009': 'C', '19011': 'C' };

describe('property: after the rule no published cell has fewer than k distinct operations', () => {
	it('holds over random scenarios and k, and HUC-8 subgroups hold it too', () => {
		fc.assert(
			fc.property(scenario, fc.integer({ min: 1, max: 5 }), fc.double({ min: 0.3, max: 1, noNaN: true }), (items, k, dominance) => {
				const input = items.map((it, i) =>
					rec({
						record_id: `s${i}`,
						county_fips: it.county,
						region: REGION[it.county],
						fy_installed: it.fy,
						practice_code: it.practice,
						operation_key: `op${it.op}`,
						credited_acres: it.acres,
						huc12: it.huc
					})
				);
				const byPid = new Map(input.map((r) => [`p-${r.record_id}`, r]));
				const { rows, counts } = anonymise(input, { pseudonym, k, dominance });
				const opsByCell = new Map<string, Set<string>>();
				const opsByHuc = new Map<string, Set<string>>();
				for (const row of rows) {
					const src = byPid.get(row.pid)!;
					const key = publishedCellKey(row);
					if (!opsByCell.has(key)) opsByCell.set(key, new Set());
					opsByCell.get(key)!.add(src.operation_key);
					if (row.huc8) {
						const hk = `${key}|${row.huc8}`;
						if (!opsByHuc.has(hk)) opsByHuc.set(hk, new Set());
						opsByHuc.get(hk)!.add(src.operation_key);
					}
				}
				for (const ops of opsByCell.values()) expect(ops.size).toBeGreaterThanOrEqual(k);
				for (const ops of opsByHuc.values()) expect(ops.size).toBeGreaterThanOrEqual(k);
				// Nothing lost silently: published + suppressed records = all records.
				expect(rows.length + counts.suppressed_records).toBe(input.length);
				expect(counts.published_as_county + counts.generalised_to_region + counts.generalised_to_state + counts.suppressed).toBe(
					counts.cells
				);
			}),
			{ numRuns: 300 }
		);
	});
});
