// The design checks as the record checker runs them (server batches, record PUT and `runnel check` all build
// their checker through src/lib/server/ingest/context.ts). Hand-worked values, sources beside them:
// - peak flow: DC × area; 1 in/day over 1 ac = 43,560 ft² × 1/12 ft ÷ 86,400 s = 0.042014 cfs
//   (NRCS National Engineering Handbook Part 650, Engineering Field Handbook, Ch. 14; a unit conversion):
//   50 ac × 0.5 in/day → 1.050 cfs.
// - design flow 15 % of peak (NRCS Conservation Practice Standard 605; also common practice) → 0.158 cfs.
// - 3 h minimum retention (the default method's value, RECALLED FROM MEMORY as the CPS 605 minimum) at
//   0.158 cfs → 1,702 ft³ of pore space → 2,431 ft³ of bed at porosity 0.70 (woodchips 0.66–0.78:
//   Christianson, Bhandari & Helmers 2010, Applied Engineering in Agriculture 26(5)).
// - 8-in corrugated plastic main, n 0.015 (RECALLED FROM MEMORY), 0.1 % slope, Manning full pipe
//   Q = 1.486/n · A · R^(2/3) · S^(1/2) = 1.486/0.015 × 0.3491 × 0.1667^(2/3) × 0.03162 = 0.331 cfs
//   (standard open-channel hydraulics).
import { describe, expect, it } from 'vitest';
import { createRecordChecker } from '../../src/lib/schema/check-records';
import { offlineCheckContext } from '../../src/lib/server/ingest/context';
import { DEFAULT_METHOD, type ReductionMethod } from '../../src/lib/domain/reduction-method';

const HEADER = [
	'local_id',
	'practice_code',
	'county_fips',
	'installed_on',
	'drainage_area_acres',
	'drainage_coefficient_in_per_day',
	'bed_length_ft',
	'bed_width_ft',
	'bed_depth_ft',
	'main_diameter_in',
	'main_slope_pct'
];
const ctxOpts = { stateFips: '19', districtCounties: new Set(['19109']), today: '2026-06-01' };

function check(cells: string[], ctx = offlineCheckContext(ctxOpts)) {
	const c = createRecordChecker(ctx);
	expect(c.header(HEADER)).toEqual([]);
	return c.row(Object.fromEntries(HEADER.map((h, i) => [h, cells[i]])), 2);
}
const row = (bed: [string, string, string], main: [string, string] = ['', '']) => [
	'B-1',
	'605',
	'19109',
	'2024-10-01',
	'50',
	'0.5',
	...bed,
	...main
];

describe('design checks through the record checker (offline context = the server’s with the default method)', () => {
	it('a 2,431 ft³ bed (the hand-worked minimum for 50 ac at 0.5 in/day) passes; 2,400 ft³ warns', () => {
		// 2,431 ft³ / (10 ft × 2 ft) = 121.55 ft long.
		expect(check(row(['121.56', '10', '2'])).findings).toEqual([]);
		const small = check(row(['120', '10', '2']));
		expect(small.record).not.toBeNull(); // warnings accept the row
		expect(small.findings.map((f) => f.code).sort()).toEqual(['bioreactor-retention-short', 'bioreactor-treats-under-15pct']);
		for (const f of small.findings) {
			expect(f).toMatchObject({ severity: 'warning', row: 2, column: 'bed_length_ft', column_number: 7, cell: 'G2', value: '120' });
		}
		const under = small.findings.find((f) => f.code === 'bioreactor-treats-under-15pct')!;
		// 2,400 × 0.70 = 1,680 ft³ of pores ÷ 10,800 s = 0.156 cfs = 14.8 % of 1.050 cfs.
		expect(under.message).toContain('0.156 cfs, 14.8% of the 1.050 cfs peak');
		expect(under.message).toContain('about 2,431 ft³ of bed at porosity 0.70');
		expect(under.rule).toMatchObject({ rule: 'bioreactor-screening', min_retention_h: 3, design_share_of_peak_pct: 15 });
	});

	it('an 8-in main at 0.1 % carries 0.331 cfs, less than the 1.050 cfs peak: a warning on main_diameter_in', () => {
		const r = check(row(['130', '10', '2'], ['8', '0.1']));
		expect(r.findings).toHaveLength(1);
		expect(r.findings[0]).toMatchObject({ code: 'main-capacity-below-peak', column: 'main_diameter_in', column_number: 10, cell: 'J2' });
		expect(r.findings[0].message).toContain('about 0.331 cfs flowing full (Manning n 0.015)');
		expect(r.findings[0].message).toContain('less than the 1.050 cfs peak');
		// A 12-in main at 0.5 % carries it: nothing to report.
		expect(check(row(['130', '10', '2'], ['12', '0.5'])).findings).toEqual([]);
	});

	it('uses the method it is given: a 4-hour minimum makes the 2,600 ft³ bed short', () => {
		const m: ReductionMethod = {
			...DEFAULT_METHOD,
			version: 'test.4h',
			bioreactor: { ...DEFAULT_METHOD.bioreactor, min_retention_hours: 4 }
		};
		// 2,600 × 0.70 = 1,820 ft³ ÷ 0.158 cfs = 11,552 s = 3.2 h: enough for 3 h, not for 4 h.
		expect(check(row(['130', '10', '2'])).findings).toEqual([]);
		const r = check(row(['130', '10', '2']), offlineCheckContext({ ...ctxOpts, method: m }));
		expect(r.findings.map((f) => f.code).sort()).toEqual(['bioreactor-retention-short', 'bioreactor-treats-under-15pct']);
		expect(r.findings.find((f) => f.code === 'bioreactor-retention-short')!.message).toContain(
			'about 3.2 hours, less than the 4.0-hour minimum'
		);
	});

	it('runs only on rows without errors, and can be turned off', () => {
		const bad = check(['B-1', '605', '19109', '2031-01-01', '50', '0.5', '60', '10', '2', '', '']);
		expect(bad.record).toBeNull();
		expect(bad.findings.map((f) => f.code)).toEqual(['date-in-future']);
		expect(check(row(['60', '10', '2']), offlineCheckContext({ ...ctxOpts, designChecks: null })).findings).toEqual([]);
	});
});
