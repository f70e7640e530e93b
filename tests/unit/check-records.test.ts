// The record checker: every rule, with exact row, column, column number and cell references.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { createRecordChecker, REDACTED, summarise, type CheckContext } from '../../src/lib/schema/check-records';
import { PRACTICE_RECORD_COLUMNS, PracticeRecordV1Schema, REQUIRED_COLUMNS } from '../../src/lib/schema/practice-record';
import { stateCountyShapes } from '../../src/lib/server/ingest/reference';
import type { Finding } from '../../src/lib/schema/findings';

const ctx: CheckContext = {
	stateFips: '19',
	districtCounties: new Set(['19153', '19169']),
	today: '2026-06-01',
	countyShapes: stateCountyShapes('19')
};

const HEADER = [
	'local_id',
	'practice_code',
	'county_fips',
	'installed_on',
	'extent_acres',
	'drainage_area_acres',
	'status',
	'withdrawn_on'
];

function checkerWithHeader(header = HEADER, c: CheckContext = ctx) {
	const checker = createRecordChecker(c);
	const headerFindings = checker.header(header);
	return { checker, headerFindings };
}

const base = { local_id: 'BLH-1', practice_code: '340', county_fips: '19153', installed_on: '2025-10-01', extent_acres: '80' };

function only(findings: Finding[], code: string): Finding {
	const hits = findings.filter((f) => f.code === code);
	expect(hits, `${code} in ${JSON.stringify(findings.map((f) => f.code))}`).toHaveLength(1);
	return hits[0];
}

describe('header', () => {
	it('accepts the schema columns in any order and case, with spaces for underscores', () => {
		const { headerFindings } = checkerWithHeader(['Installed On', 'LOCAL_ID', ' county_fips ', 'practice-code']);
		expect(headerFindings).toEqual([]);
	});

	it('reports missing required columns as file-level errors', () => {
		const { checker, headerFindings } = checkerWithHeader(['local_id', 'practice_code']);
		const missing = headerFindings.filter((f) => f.code === 'missing-column');
		expect(missing.map((f) => f.column)).toEqual(['county_fips', 'installed_on']);
		for (const f of missing) {
			expect(f.severity).toBe('error');
			expect(f.row).toBeNull();
		}
		// every row is then rejected, without repeating the missing column on each row
		const r = checker.row({ local_id: 'A', practice_code: '340' }, 2);
		expect(r.record).toBeNull();
		expect(r.findings.filter((f) => f.code === 'required-missing')).toEqual([]);
	});

	it('reports unknown, duplicate and blank headers with their column numbers and header cells', () => {
		const { headerFindings } = checkerWithHeader([...HEADER, 'Acres', 'local_id', '', 'drainage area']);
		const unknown = headerFindings.filter((f) => f.code === 'unknown-column');
		expect(unknown.map((f) => [f.column, f.column_number, f.cell, f.severity])).toEqual([
			['Acres', 9, 'I1', 'warning'],
			['drainage area', 12, 'L1', 'warning']
		]);
		expect(unknown[1].message).toContain('Did you mean drainage_area_acres?');
		const dup = only(headerFindings, 'duplicate-column');
		expect([dup.column, dup.column_number, dup.cell, dup.severity, dup.rule]).toEqual([
			'local_id',
			10,
			'J1',
			'error',
			{ rule: 'unique-header', first_column: 1 }
		]);
		const blank = only(headerFindings, 'blank-column-header');
		expect([blank.column_number, blank.cell]).toEqual([11, 'K1']);
	});

	it('uses the header row number it is given for header cells', () => {
		const checker = createRecordChecker(ctx);
		const f = checker.header([...HEADER, 'foo'], 3);
		expect(only(f, 'unknown-column').cell).toBe('I3');
	});
});

describe('a valid row', () => {
	it('normalises to the record: numbers as numbers, status defaulted, absent columns null', () => {
		const { checker } = checkerWithHeader();
		const r = checker.row({ ...base, extent_acres: ' 80.25 ' }, 2);
		expect(r.findings).toEqual([]);
		expect(r.record).toMatchObject({ local_id: 'BLH-1', extent_acres: 80.25, status: 'installed', withdrawn_on: null, notes: null });
		expect(Object.keys(r.record!)).toEqual(PRACTICE_RECORD_COLUMNS);
		expect(PracticeRecordV1Schema.safeParse(r.record).success).toBe(true);
	});

	it('accepts JSON numbers for codes and numeric strings for numbers', () => {
		const checker = createRecordChecker(ctx);
		const r = checker.row(
			{ local_id: 'J-1', practice_code: 605, county_fips: 19169, installed_on: '2024-05-01', drainage_area_acres: 45 },
			1
		);
		expect(r.findings).toEqual([]);
		expect(r.record).toMatchObject({ practice_code: '605', county_fips: '19169', drainage_area_acres: 45 });
	});

	it('accepts a spreadsheet date cell as its UTC calendar date', () => {
		const { checker } = checkerWithHeader();
		const r = checker.row({ ...base, installed_on: new Date(Date.UTC(2024, 1, 29)) }, 2);
		expect(r.findings).toEqual([]);
		expect(r.record?.installed_on).toBe('2024-02-29');
	});
});

describe('cell rules, with exact cells', () => {
	// a fresh checker per row: the same local_id in one checker would be a duplicate
	const rowOf = (values: Record<string, unknown>, n = 17) => checkerWithHeader().checker.row({ ...values }, n);

	it.each([
		['extent_acres', '1,5', 'number-format', 'E17'],
		['extent_acres', '1,500', 'number-format', 'E17'],
		['extent_acres', '1e400', 'number-format', 'E17'],
		['extent_acres', '2E3', 'number-format', 'E17'],
		['extent_acres', '$80', 'number-format', 'E17'],
		['extent_acres', '80 ac', 'number-format', 'E17'],
		['extent_acres', 'NaN', 'not-a-number', 'E17'],
		['extent_acres', 'Infinity', 'not-a-number', 'E17'],
		['extent_acres', 'lots', 'not-a-number', 'E17'],
		['extent_acres', '0', 'below-minimum', 'E17'],
		['extent_acres', '-3', 'below-minimum', 'E17'],
		['extent_acres', '80.125', 'too-many-decimals', 'E17'],
		['extent_acres', '2000000', 'above-maximum', 'E17'],
		['installed_on', '2026-02-30', 'bad-date', 'D17'],
		['installed_on', '02/03/2026', 'bad-date', 'D17'],
		['installed_on', '2025-13-01', 'bad-date', 'D17'],
		['installed_on', '2025-10-01T08:00:00Z', 'bad-date', 'D17'],
		['installed_on', '20251001', 'bad-date', 'D17'],
		['county_fips', '1915', 'bad-format', 'C17'],
		['county_fips', '19-153', 'bad-format', 'C17'],
		['practice_code', '999', 'not-in-list', 'B17'],
		['local_id', "'; DROP TABLE records; --", 'bad-format', 'A17'],
		['local_id', 'x'.repeat(65), 'bad-format', 'A17'],
		['status', 'gone', 'not-in-list', 'G17']
	])('%s = %j → %s at %s', (column, value, code, cell) => {
		const r = rowOf({ ...base, [column]: value });
		expect(r.record).toBeNull();
		const f = only(r.findings, code);
		expect(f).toMatchObject({ severity: 'error', row: 17, column, cell, value: String(value).slice(0, 200) });
		expect(f.column_number).toBe(HEADER.indexOf(column) + 1);
		expect(f.message.length).toBeGreaterThan(20);
		expect(f.rule).not.toBeNull();
	});

	it('explains a decimal comma, an ambiguous date and a day that does not exist in plain words', () => {
		expect(only(rowOf({ ...base, extent_acres: '1,5' }).findings, 'number-format').message).toMatch(/point for decimals/);
		expect(only(rowOf({ ...base, installed_on: '02/03/2026' }).findings, 'bad-date').message).toMatch(/YYYY-MM-DD/);
		expect(only(rowOf({ ...base, installed_on: '2026-02-30' }).findings, 'bad-date').message).toMatch(/28 days/);
		expect(only(rowOf({ ...base, installed_on: '2024-02-30' }).findings, 'bad-date').message).toMatch(/29 days/);
		expect(only(rowOf({ ...base, county_fips: '1915' }).findings, 'bad-format').message).toMatch(/leading zero/);
	});

	it('accepts 29 February only in leap years (Gregorian rule)', () => {
		expect(rowOf({ ...base, installed_on: '2024-02-29' }).record).not.toBeNull();
		expect(only(rowOf({ ...base, installed_on: '2025-02-29' }).findings, 'bad-date')).toBeDefined();
		expect(only(rowOf({ ...base, installed_on: '1900-02-29' }).findings, 'bad-date')).toBeDefined();
	});

	it('rejects JSON values of the wrong type', () => {
		const c = createRecordChecker(ctx);
		for (const [col, v] of [
			['extent_acres', true],
			['extent_acres', { n: 1 }],
			['local_id', ['a']],
			['installed_on', 45000],
			['extent_acres', Infinity]
		] as const) {
			const r = c.row({ ...base, local_id: `T-${col}-${String(v)}`.replace(/[^A-Za-z0-9._-]/g, '_'), [col]: v }, 3);
			expect(r.record, `${col}=${String(v)}`).toBeNull();
			expect(r.findings.some((f) => f.column === col && (f.code === 'wrong-type' || f.code === 'not-a-number'))).toBe(true);
		}
	});

	it('rejects control characters and broken Unicode in text', () => {
		const c = createRecordChecker(ctx);
		const nul = c.row({ ...base, local_id: 'C-1', funding_program: 'State\u0000 fund' }, 2);
		expect(only(nul.findings, 'bad-characters').column).toBe('funding_program');
		const lone = c.row({ ...base, local_id: 'C-2', notes: 'half \ud800 pair' }, 3);
		expect(only(lone.findings, 'bad-characters').column).toBe('notes');
		const ok = c.row({ ...base, local_id: 'C-3', notes: 'line one\nline two\ttabbed' }, 4);
		expect(ok.findings).toEqual([]);
	});

	it('rejects notes over 2000 characters and counts them', () => {
		const c = createRecordChecker(ctx);
		const r = c.row({ ...base, notes: 'n'.repeat(2001) }, 5);
		const f = only(r.findings, 'too-long');
		expect(f.rule).toEqual({ rule: 'max-length', max: 2000 });
		expect(f.message).toContain('2001');
		expect(f.value?.length).toBeLessThanOrEqual(201);
	});

	it('requires a whole number of control structures', () => {
		const c = createRecordChecker(ctx);
		const r = c.row(
			{
				local_id: 'D-1',
				practice_code: '554',
				county_fips: '19153',
				installed_on: '2025-01-01',
				drainage_area_acres: 60,
				control_structures: '2.5'
			},
			4
		);
		expect(only(r.findings, 'not-an-integer').column).toBe('control_structures');
	});
});

describe('formulas', () => {
	it('keeps a formula in a text column as text, with a warning', () => {
		const c = createRecordChecker(ctx);
		const r = c.row({ ...base, notes: '=HYPERLINK("http://example.org","x")' }, 6);
		expect(r.record?.notes).toBe('=HYPERLINK("http://example.org","x")');
		expect(only(r.findings, 'formula-in-cell')).toMatchObject({ severity: 'warning', column: 'notes', row: 6 });
	});

	it('rejects a formula in a number, date or code column', () => {
		const c = createRecordChecker(ctx);
		for (const col of ['extent_acres', 'installed_on', 'county_fips']) {
			const r = c.row({ ...base, local_id: `F-${col}`, [col]: '=SUM(A1:A3)' }, 7);
			expect(r.record).toBeNull();
			expect(only(r.findings, 'formula-in-cell')).toMatchObject({ severity: 'error', column: col });
		}
	});

	it.each(['=cmd|', '@SUM(A1)', '+cmd', '-cmd'])('flags %j in text, but not negative numbers or dashes', (v) => {
		const c = createRecordChecker(ctx);
		expect(only(c.row({ ...base, funding_program: v }, 2).findings, 'formula-in-cell').severity).toBe('warning');
		expect(c.row({ ...base, local_id: 'Z', funding_program: '- see file' }, 3).findings).toEqual([]);
	});
});

describe('required per practice (catalog credited basis)', () => {
	const c = createRecordChecker(ctx);
	it('needs extent_acres for an in-field practice (340 cover crop)', () => {
		const r = c.row({ local_id: 'P-1', practice_code: '340', county_fips: '19153', installed_on: '2025-01-01' }, 2);
		const f = only(r.findings, 'required-for-practice');
		expect(f).toMatchObject({ column: 'extent_acres', rule: { rule: 'required-for-practice', practice: '340', category: 'in_field' } });
	});
	it.each(['604', '605', '554', '656', '587'])('needs drainage_area_acres for edge-of-field practice %s', (code) => {
		const r = c.row({ local_id: `P-${code}`, practice_code: code, county_fips: '19153', installed_on: '2025-01-01', extent_acres: 5 }, 2);
		expect(only(r.findings, 'required-for-practice').column).toBe('drainage_area_acres');
	});
	it('warns when a detail column belongs to another practice, and keeps the value', () => {
		const r = c.row({ ...base, local_id: 'P-9', bed_length_ft: 100, control_structures: 2 }, 2);
		expect(r.record?.bed_length_ft).toBe(100);
		expect(r.findings.filter((f) => f.code === 'not-applicable').map((f) => f.column)).toEqual(['bed_length_ft', 'control_structures']);
	});
	it('reports every required value that is empty', () => {
		const r = createRecordChecker(ctx).row({ local_id: '', practice_code: ' ', county_fips: null }, 9);
		expect(r.findings.filter((f) => f.code === 'required-missing').map((f) => f.column)).toEqual([...REQUIRED_COLUMNS]);
	});
});

describe('cross-field rules', () => {
	const c = () => createRecordChecker(ctx);
	it('withdrawn needs withdrawn_on, on or after installed_on', () => {
		expect(only(c().row({ ...base, status: 'withdrawn' }, 2).findings, 'withdrawn-date-missing').column).toBe('withdrawn_on');
		expect(
			only(c().row({ ...base, status: 'Withdrawn', withdrawn_on: '2025-09-30' }, 2).findings, 'withdrawn-before-installed').column
		).toBe('withdrawn_on');
		const ok = c().row({ ...base, status: 'withdrawn', withdrawn_on: '2025-10-01' }, 2);
		expect(ok.findings).toEqual([]);
		expect(ok.record?.status).toBe('withdrawn');
	});
	it('withdrawn_on without the withdrawn status is an error', () => {
		expect(only(c().row({ ...base, withdrawn_on: '2026-01-01' }, 2).findings, 'withdrawn-date-without-status').severity).toBe('error');
	});
	it('dates after today are in the future', () => {
		const r = c().row({ ...base, installed_on: '2026-06-02' }, 2);
		expect(only(r.findings, 'date-in-future').rule).toEqual({ rule: 'not-after', date: '2026-06-01' });
		expect(c().row({ ...base, installed_on: '2026-06-01' }, 2).record).not.toBeNull();
	});
	it('very old install dates are flagged, not rejected', () => {
		const r = c().row({ ...base, installed_on: '1962-05-01' }, 2);
		expect(r.record).not.toBeNull();
		expect(only(r.findings, 'date-implausible').severity).toBe('warning');
	});
	it('cost share may not exceed the total cost', () => {
		const r = c().row({ ...base, cost_total_usd: '1000', cost_share_usd: '1000.01' }, 2);
		expect(only(r.findings, 'share-exceeds-total').column).toBe('cost_share_usd');
		expect(c().row({ ...base, cost_total_usd: '1000', cost_share_usd: '1000' }, 2).findings).toEqual([]);
		expect(c().row({ ...base, cost_total_usd: '0', cost_share_usd: '0' }, 2).findings).toEqual([]);
	});
	it('latitude and longitude go together and stay in range', () => {
		expect(only(c().row({ ...base, latitude: '42' }, 2).findings, 'coordinates-incomplete').column).toBe('longitude');
		const r = c().row({ ...base, latitude: '91', longitude: '-93' }, 2);
		expect(only(r.findings, 'above-maximum')).toMatchObject({ column: 'latitude', value: REDACTED });
	});
});

describe('counties', () => {
	const c = () => createRecordChecker(ctx);
	it("rejects another state's county", () => {
		const f = only(c().row({ ...base, county_fips: '17031' }, 2).findings, 'county-wrong-state');
		expect(f.rule).toEqual({ rule: 'state', state_fips: '19' });
	});
	it('rejects a code that is not a county of the state (us-atlas, Census 2017)', () => {
		expect(only(c().row({ ...base, county_fips: '19999' }, 2).findings, 'county-unknown')).toBeDefined();
	});
	it("rejects a county of the state that the district does not serve (another district's county)", () => {
		const f = only(c().row({ ...base, county_fips: '19033' }, 2).findings, 'county-not-served');
		expect(f.rule).toEqual({ rule: 'served-counties', expected: ['19153', '19169'] });
	});
	it('skips the served-county rule without a district', () => {
		const offline = createRecordChecker({ ...ctx, districtCounties: null });
		expect(offline.row({ ...base, county_fips: '19033' }, 2).findings).toEqual([]);
	});
});

describe('duplicates, plausibility and personal data', () => {
	it('rejects a local_id used twice in a file, naming the first row', () => {
		const c = createRecordChecker(ctx);
		expect(c.row(base, 2).record).not.toBeNull();
		expect(c.row({ ...base, local_id: 'other' }, 3).record).not.toBeNull();
		const r = c.row(base, 40);
		expect(r.record).toBeNull();
		expect(only(r.findings, 'duplicate-local-id')).toMatchObject({ row: 40, rule: { rule: 'unique', first_row: 2 } });
	});

	it('flags extreme acres for the practice as a warning (our own rule of thumb)', () => {
		const c = createRecordChecker(ctx);
		const big = c.row(
			{ local_id: 'B-1', practice_code: '605', county_fips: '19153', installed_on: '2024-04-01', drainage_area_acres: '4000' },
			2
		);
		expect(big.record).not.toBeNull();
		const f = only(big.findings, 'acres-implausible');
		expect(f).toMatchObject({ severity: 'warning', column: 'drainage_area_acres' });
		expect(String(f.rule?.basis)).toMatch(/own rule of thumb/);
		expect(only(c.row({ ...base, local_id: 'B-2', extent_acres: '0.01' }, 3).findings, 'acres-implausible').message).toMatch(/small/);
	});

	it('warns when the point is outside the stated county, and redacts the coordinates', () => {
		const c = createRecordChecker(ctx);
		// Ames, Story County (19169): about 42.03 N, 93.62 W. Des Moines, Polk County (19153): about 41.59 N, 93.62 W.
		// (Approximate city-centre coordinates, general reference.)
		const inside = c.row({ ...base, local_id: 'G-1', county_fips: '19169', latitude: '42.03', longitude: '-93.62' }, 2);
		expect(inside.findings).toEqual([]);
		const outside = c.row({ ...base, local_id: 'G-2', county_fips: '19169', latitude: '41.59', longitude: '-93.62' }, 3);
		expect(outside.record).not.toBeNull();
		const f = only(outside.findings, 'point-outside-county');
		expect(f).toMatchObject({ severity: 'warning', value: REDACTED, column: 'latitude' });
		expect(f.message).toContain('Story');
		// lat/lon swapped: out of range
		expect(
			only(c.row({ ...base, local_id: 'G-3', county_fips: '19169', latitude: '-93.62', longitude: '42.03' }, 4).findings, 'below-minimum')
		).toBeDefined();
	});

	it('redacts personal columns in every finding', () => {
		const c = createRecordChecker(ctx);
		const r = c.row({ ...base, operator_name: 'x'.repeat(201), latitude: 'north', longitude: '-93.6' }, 2);
		const personal = r.findings.filter((f) => f.column === 'operator_name' || f.column === 'latitude');
		expect(personal.length).toBe(2);
		for (const f of personal) expect(f.value).toBe(REDACTED);
		expect(JSON.stringify(r.findings)).not.toContain('north');
	});
});

describe('keyed rows (JSON, NDJSON)', () => {
	it('reports each unknown property once, as a file-level warning, and has no cells', () => {
		const c = createRecordChecker(ctx);
		const r1 = c.row({ ...base, acres: 3 }, 1);
		const u = only(r1.findings, 'unknown-column');
		expect(u).toMatchObject({ row: null, column: 'acres', cell: null, column_number: null });
		expect(r1.record).not.toBeNull();
		const r2 = c.row({ ...base, local_id: 'K-2', acres: 4, extent_acres: 'x' }, 2);
		expect(r2.findings.filter((f) => f.code === 'unknown-column')).toEqual([]);
		expect(only(r2.findings, 'not-a-number')).toMatchObject({ row: 2, column: 'extent_acres', cell: null, column_number: null });
	});
});

describe('design check hook', () => {
	it('runs on valid records and fills in row and cell', () => {
		const c = createRecordChecker({
			...ctx,
			designChecks: (r) =>
				r.practice_code === '605'
					? [
							{
								code: 'bioreactor-test',
								severity: 'warning',
								row: null,
								column: 'drainage_area_acres',
								column_number: null,
								cell: null,
								value: null,
								rule: null,
								message: 'x'
							}
						]
					: []
		});
		c.header(HEADER);
		const r = c.row(
			{ local_id: 'H', practice_code: '605', county_fips: '19153', installed_on: '2024-01-01', drainage_area_acres: '50' },
			8
		);
		expect(only(r.findings, 'bioreactor-test')).toMatchObject({ row: 8, column_number: 6, cell: 'F8' });
		expect(r.record).not.toBeNull();
	});
});

describe('summarise', () => {
	it('counts by code and severity and keeps file-level findings apart', () => {
		const c = createRecordChecker(ctx);
		const all = [
			...c.header([...HEADER, 'notes', 'x']),
			...c.row({ ...base, notes: '=1+1' }, 2).findings,
			...c.row({ ...base, extent_acres: 'x' }, 3).findings
		];
		const s = summarise(all);
		expect(s).toMatchObject({ total: 4, errors: 2, warnings: 2, file_level: 1 });
		expect(s.by_code['formula-in-cell']).toEqual({ error: 0, warning: 1 });
		expect(s.by_code['not-a-number']).toEqual({ error: 1, warning: 0 });
		expect(s.by_code['duplicate-local-id']).toEqual({ error: 1, warning: 0 });
	});
});

describe('property: whatever the cells, the checker never throws and accepted records satisfy the zod schema', () => {
	const cell = fc.oneof(
		fc.constant(''),
		fc.string(),
		fc.double(),
		fc.integer(),
		fc.boolean(),
		fc.constant(null),
		fc.constantFrom('340', '605', '19153', '19169', '17031', '2024-02-29', '2025-02-29', '12.5', '1,5', '1e400', 'NaN', 'withdrawn', '=A1')
	);
	it('holds for random rows', () => {
		fc.assert(
			fc.property(fc.dictionary(fc.constantFrom(...PRACTICE_RECORD_COLUMNS, 'extra'), cell), (values) => {
				const c = createRecordChecker(ctx);
				const r = c.row(values, 2);
				if (r.record) {
					expect(PracticeRecordV1Schema.safeParse(r.record).success).toBe(true);
					expect(r.findings.every((f) => f.severity === 'warning')).toBe(true);
				} else expect(r.findings.some((f) => f.severity === 'error')).toBe(true);
			}),
			{ numRuns: 500 }
		);
	});
});
