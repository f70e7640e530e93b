// What a record contributes to the rollups. Numbers from the default method: bioreactor 43 % nitrate-N
// (Iowa NRS science assessment, ISU 2013/2017 [S]; SD 21 recalled), cereal rye 31 % (SD 29) [S]; baseline
// 10 lb N/ac/yr (Illinois NLRS 2015 [S]). Fiscal years: state FY from July (NCSL "Fiscal Years", 2023) and
// federal FY October–September (31 U.S.C. §1102), named for the year in which they end.
import { describe, expect, it } from 'vitest';
import { huc8Of, recordFacts, type FactRecord } from '$lib/domain/rollup-facts';
import { DEFAULT_METHOD } from '$lib/domain/reduction-method';

const base: FactRecord = {
	id: '1',
	district_id: 4,
	practice_code: '605',
	county_fips: '19169',
	installed_on: '2024-08-15',
	status: 'installed',
	withdrawn_on: null,
	extent_acres: null,
	drainage_area_acres: '50.00',
	field_id: null,
	operation_id: ' farm-1 ',
	huc12: '070801050101',
	cost_total_usd: '12000.00',
	cost_share_usd: null,
	catalog_lifespan_years: 15
};

describe('record facts', () => {
	it('a bioreactor alone: 50 ac × 10 lb × 43 % = 215 lb N/yr; FYs on both bases', () => {
		const [f] = recordFacts([base], DEFAULT_METHOD, 7);
		expect(f.n_lb.mean).toBeCloseTo(215, 9);
		expect(f.credited_acres).toBe(50);
		expect(f.huc8).toBe('07080105');
		expect(f.operation_key).toBe('farm-1');
		expect(f.cost_usd).toBe(12000);
		expect(f.cost_share_usd).toBeNull();
		// Installed 2024-08-15: state FY2025 (July 2024 – June 2025), federal FY2024 (October 2023 – September 2024).
		// 15-year life: last day 2039-08-14 → state FY2040, federal FY2039.
		expect(f.state).toEqual({ installed: 2025, first: 2025, last: 2040 });
		expect(f.federal).toEqual({ installed: 2024, first: 2024, last: 2039 });
	});

	it('the state start month moves the FYs (a January start makes the FY the calendar year)', () => {
		const [f] = recordFacts([base], DEFAULT_METHOD, 1);
		expect(f.state.installed).toBe(2024);
		expect(f.state_fy_start_month).toBe(1);
	});

	it('stacked on one field: shares of 1 − (1 − 0.43)(1 − 0.31) in proportion 43 : 31', () => {
		const rye: FactRecord = {
			...base,
			id: '2',
			practice_code: '340',
			extent_acres: '50',
			drainage_area_acres: null,
			field_id: 'F',
			catalog_lifespan_years: 1
		};
		const [bio, cover] = recordFacts([{ ...base, field_id: 'F' }, rye], DEFAULT_METHOD, 7);
		const combined = 1 - 0.57 * 0.69;
		expect(bio.n_lb.mean).toBeCloseTo(50 * 10 * combined * (0.43 / 0.74), 9);
		expect(cover.n_lb.mean).toBeCloseTo(50 * 10 * combined * (0.31 / 0.74), 9);
	});

	it('a withdrawn practice keeps what it had in service beside the practices still on the field; the others no longer share with it', () => {
		const rye: FactRecord = {
			...base,
			id: '2',
			practice_code: '340',
			extent_acres: '50',
			drainage_area_acres: null,
			field_id: 'F',
			catalog_lifespan_years: 1
		};
		const gone: FactRecord = { ...base, field_id: 'F', status: 'withdrawn', withdrawn_on: '2026-03-01' };
		const [bio, cover] = recordFacts([gone, rye], DEFAULT_METHOD, 7);
		const combined = 1 - 0.57 * 0.69;
		expect(bio.n_lb.mean).toBeCloseTo(50 * 10 * combined * (0.43 / 0.74), 9);
		expect(bio.counted).toBe(true);
		expect(cover.n_lb.mean).toBeCloseTo(50 * 10 * 0.31, 9); // alone now
		// In service until the withdrawal: state FY2026 holds 2026-03-01.
		expect(bio.state).toEqual({ installed: 2025, first: 2025, last: 2026 });
	});

	it('records with no operation id share one key per district; a practice the method credits 0 still counts', () => {
		const [f] = recordFacts(
			[{ ...base, operation_id: null, practice_code: '590', extent_acres: '30', catalog_lifespan_years: 1 }],
			DEFAULT_METHOD,
			7
		);
		expect(f.operation_key).toBe('');
		expect(f.n_lb).toEqual({ mean: 0, low: 0, high: 0 });
		expect(f.credited_acres).toBe(30);
	});

	it('HUC-8 is the first 8 digits of a 12-digit HUC-12, else unknown', () => {
		expect(huc8Of('071000060303')).toBe('07100006');
		expect(huc8Of('0710')).toBeNull();
		expect(huc8Of(null)).toBeNull();
	});
});
