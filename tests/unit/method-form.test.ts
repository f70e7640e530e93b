// The admin form for a new method version (Runnel's own form logic; the values are the default method's,
// sourced in reduction-method.test.ts). A changed value must carry the source the admin names for it.
import { describe, expect, it } from 'vitest';
import { fieldName, fieldsToMethod, methodToFields } from '../../src/lib/method-form';
import { DEFAULT_METHOD } from '../../src/lib/domain/reduction-method';

const base = DEFAULT_METHOD;
const fields = (patch: Record<string, string> = {}) => ({
	...methodToFields(base),
	version: 'ia-2017.2',
	label: 'Second edition',
	...patch
});
const cite = { cite_title: 'A newer assessment table', cite_publisher: 'A state university', cite_year: '2024', cite_section: 'Table 3' };

describe('method form', () => {
	it('round-trips: the unchanged form gives the same method under the new name, citations kept', () => {
		const r = fieldsToMethod(base, fields());
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect({ ...r.method, version: base.version, label: base.label }).toEqual(base);
	});

	it('shows efficiencies as percentages', () => {
		const f = methodToFields(base);
		expect(f[fieldName.mean('605', 'n')]).toBe('43');
		expect(f[fieldName.sd('340', 'n')]).toBe('29');
		expect(f[fieldName.mean('605', 'p')]).toBe('');
		expect(f.design_share_pct).toBe('15');
	});

	it('a changed value needs a named source, then carries it; untouched values keep theirs', () => {
		const noSource = fieldsToMethod(base, fields({ [fieldName.mean('605', 'n')]: '45' }));
		expect(noSource.ok).toBe(false);
		if (!noSource.ok) expect(noSource.errors.cite_title).toMatch(/source/);

		const r = fieldsToMethod(base, fields({ [fieldName.mean('605', 'n')]: '45', ...cite }));
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		const bio = r.method.practices.find((p) => p.practice_code === '605')!;
		expect(bio.n).toMatchObject({ mean: 0.45, sd: 0.21, citation: { title: 'A newer assessment table', year: 2024, recalled: false } });
		const rye = r.method.practices.find((p) => p.practice_code === '340')!;
		expect(rye.n).toEqual(base.practices.find((p) => p.practice_code === '340')!.n);
	});

	it('clearing an efficiency credits nothing; a spread without a mean is refused', () => {
		const r = fieldsToMethod(base, fields({ [fieldName.mean('340', 'p')]: '', [fieldName.sd('340', 'p')]: '' }));
		expect(r.ok && r.method.practices.find((p) => p.practice_code === '340')!.p).toBeNull();
		const bad = fieldsToMethod(base, fields({ [fieldName.mean('340', 'p')]: '', ...cite }));
		expect(!bad.ok && bad.errors[fieldName.sd('340', 'p')]).toMatch(/mean/);
	});

	it('ties every problem to its field', () => {
		const r = fieldsToMethod(base, fields({ version: base.version, [fieldName.mean('605', 'n')]: 'abc', baseline_n: '', ...cite }));
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(Object.keys(r.errors).sort()).toEqual([fieldName.mean('605', 'n'), 'baseline_n', 'version'].sort());
		const over = fieldsToMethod(base, fields({ [fieldName.mean('605', 'n')]: '143', default_porosity: '70', ...cite }));
		expect(!over.ok && over.errors[fieldName.mean('605', 'n')]).toBeTruthy();
		expect(!over.ok && over.errors.default_porosity).toBeTruthy();
	});

	it('reads county overrides line by line', () => {
		const r = fieldsToMethod(base, fields({ counties: '19169, 22, 1.1\n19015;18;0.9', ...cite }));
		expect(r.ok && r.method.baseline.counties.map((c) => [c.county_fips, c.n_lb_per_ac_yr, c.p_lb_per_ac_yr])).toEqual([
			['19169', 22, 1.1],
			['19015', 18, 0.9]
		]);
		const bad = fieldsToMethod(base, fields({ counties: '19169 twenty', ...cite }));
		expect(!bad.ok && bad.errors.counties).toMatch(/Line 1/);
	});
});
