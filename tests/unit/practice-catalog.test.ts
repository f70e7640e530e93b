import { describe, expect, it } from 'vitest';
import { PRACTICE_CATALOG, practiceByCode } from '../../src/lib/domain/practice-catalog';

// Titles as the NRCS National Handbook of Conservation Practices names its standards (recalled from
// memory of the standards' titles; the codes are the public standard numbers).
describe('practice catalog', () => {
	it('covers every practice the hub must accept', () => {
		const required = [
			'327',
			'328',
			'329',
			'340',
			'345',
			'386',
			'390',
			'391',
			'393',
			'410',
			'412',
			'554',
			'587',
			'590',
			'600',
			'604',
			'605',
			'638',
			'656',
			'657'
		];
		for (const c of required) expect(practiceByCode(c), c).toBeDefined();
	});

	it.each([
		['605', 'Denitrifying Bioreactor'],
		['604', 'Saturated Buffer'],
		['554', 'Drainage Water Management'],
		['340', 'Cover Crop'],
		['590', 'Nutrient Management'],
		['656', 'Constructed Wetland']
	])('%s is titled %s', (code, name) => expect(practiceByCode(code)?.name).toBe(name));

	it('edge-of-field practices are credited on drainage area, in-field on acres treated', () => {
		for (const p of PRACTICE_CATALOG) {
			expect(p.credited_basis).toBe(p.category === 'edge_of_field' ? 'drainage_area_acres' : 'extent_acres');
		}
		for (const c of ['604', '605', '554', '656', '587']) expect(practiceByCode(c)?.category).toBe('edge_of_field');
	});

	it('a bioreactor lasts at least 10 years (NRCS CPS 605: expected life at least 10 years)', () => {
		expect(practiceByCode('605')!.lifespan_years).toBeGreaterThanOrEqual(10);
	});

	it('every row says where its values come from', () => {
		for (const p of PRACTICE_CATALOG) expect(p.source_note).toMatch(/memory|NRCS/);
	});
});
