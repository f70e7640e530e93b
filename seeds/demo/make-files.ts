// Writes the demo upload files committed beside this script (run again only when they must change):
//   clean.csv     — 60 valid Bluestem Hills (BLH) records, every column of schema v1 in the header;
//   clean.xlsx    — 40 more valid BLH records on the first sheet "Practices" (other local ids);
//   mistakes.csv  — 17 rows with deliberate mistakes of different kinds, documented in mistakes.json.
// Usage: npx tsx seeds/demo/make-files.ts
import { writeFileSync } from 'node:fs';
import path from 'node:path';
import ExcelJS from 'exceljs';
import { PRACTICE_RECORD_COLUMNS } from '../../src/lib/schema/practice-record';
import { toCsv } from './csv';
import { generateDemoRecords, type DemoRow } from './records';

const DIR = import.meta.dirname;

/** Upload files use their own local ids (UPL-…), so they never touch the seeded records. */
function uploadRows(seed: number, n: number, prefix: string): DemoRow[] {
	const blh = generateDemoRecords(seed).find((d) => d.district === 'BLH')!;
	return blh.initial.slice(0, n).map((r, i) => ({ ...r, local_id: `${prefix}-${String(i + 1).padStart(4, '0')}` }));
}

export interface Mistake {
	row: number;
	column: string | null;
	code: string;
	severity: 'error' | 'warning';
	what: string;
}

async function main() {
	const clean = uploadRows(777, 60, 'UPL-CSV');
	writeFileSync(path.join(DIR, 'clean.csv'), toCsv(clean));

	const xlsxRows = uploadRows(778, 40, 'UPL-XLSX');
	const wb = new ExcelJS.Workbook();
	wb.creator = 'Runnel demo';
	// Fixed dates: the same input gives the same file.
	wb.created = new Date('2026-11-15T00:00:00Z');
	wb.modified = new Date('2026-11-15T00:00:00Z');
	const ws = wb.addWorksheet('Practices');
	ws.addRow([...PRACTICE_RECORD_COLUMNS]);
	for (const r of xlsxRows) ws.addRow(PRACTICE_RECORD_COLUMNS.map((c) => r[c] ?? null));
	ws.getRow(1).font = { bold: true };
	// Codes stay text in the sheet (leading zeros, 12-digit watershed codes).
	for (const c of ['county_fips', 'huc12', 'practice_code', 'local_id']) ws.getColumn((PRACTICE_RECORD_COLUMNS as readonly string[]).indexOf(c) + 1).numFmt = '@';
	await wb.xlsx.writeFile(path.join(DIR, 'clean.xlsx'));

	// The mistakes file: a good row first, then one mistake per row (row numbers count the header as 1).
	const base = uploadRows(779, 20, 'UPL-BAD');
	const inField = base.find((r) => r.practice_code === '340') ?? { ...base[0], practice_code: '340' };
	const row = (over: DemoRow, from: DemoRow = base[0]): DemoRow => ({ ...from, ...over });
	const rows: DemoRow[] = [];
	const mistakes: Mistake[] = [];
	const add = (r: DemoRow, m?: Omit<Mistake, 'row'>) => {
		rows.push(r);
		if (m) mistakes.push({ row: rows.length + 1, ...m });
	};
	const id = (n: number) => `UPL-BAD-${String(n).padStart(4, '0')}`;
	const cover = { ...inField, practice_code: '340', drainage_area_acres: null, extent_acres: 42.5, cover_species: 'cereal rye' };
	const bio = {
		...base[0],
		practice_code: '605',
		extent_acres: null,
		drainage_area_acres: 55,
		bed_length_ft: 100,
		bed_width_ft: 20,
		bed_depth_ft: 4,
		drainage_coefficient_in_per_day: 0.5,
		main_diameter_in: 8,
		main_slope_pct: 0.5,
		media_porosity: 0.7,
		cover_species: null
	};

	add(row({ local_id: id(1) }, cover));
	add(row({ local_id: id(2), practice_code: '999' }, cover), {
		column: 'practice_code',
		code: 'not-in-list',
		severity: 'error',
		what: 'a practice code that is not in the practice list'
	});
	add(row({ local_id: id(3), county_fips: '19033' }, cover), {
		column: 'county_fips',
		code: 'county-not-served',
		severity: 'error',
		what: "another district's county (Cerro Gordo is served by Kettle Prairie)"
	});
	add(row({ local_id: id(4), county_fips: '1910' }, cover), {
		column: 'county_fips',
		code: 'bad-format',
		severity: 'error',
		what: 'a county code with four digits (the leading zero lost)'
	});
	add(row({ local_id: id(5), installed_on: '2026-02-30' }, cover), {
		column: 'installed_on',
		code: 'bad-date',
		severity: 'error',
		what: 'a date that does not exist (30 February)'
	});
	add(row({ local_id: id(6), installed_on: '03/15/2024' }, cover), {
		column: 'installed_on',
		code: 'bad-date',
		severity: 'error',
		what: 'a US-style date instead of YYYY-MM-DD'
	});
	add(row({ local_id: id(7), installed_on: '2031-05-01' }, cover), {
		column: 'installed_on',
		code: 'date-in-future',
		severity: 'error',
		what: 'an install date in the future'
	});
	add(row({ local_id: id(8), extent_acres: null }, cover), {
		column: 'extent_acres',
		code: 'required-for-practice',
		severity: 'error',
		what: 'acres missing for an in-field practice (cover crop)'
	});
	add(row({ local_id: id(9), drainage_area_acres: -12 }, bio), {
		column: 'drainage_area_acres',
		code: 'below-minimum',
		severity: 'error',
		what: 'a negative drainage area for a bioreactor'
	});
	add(row({ local_id: id(10), cost_total_usd: 5000, cost_share_usd: 9000 }, cover), {
		column: 'cost_share_usd',
		code: 'share-exceeds-total',
		severity: 'error',
		what: 'cost share larger than the total cost'
	});
	add(row({ local_id: id(11), status: 'withdrawn', withdrawn_on: null }, cover), {
		column: 'withdrawn_on',
		code: 'withdrawn-date-missing',
		severity: 'error',
		what: 'withdrawn without the date it was withdrawn'
	});
	add(row({ local_id: id(1) }, cover), {
		column: 'local_id',
		code: 'duplicate-local-id',
		severity: 'error',
		what: 'the same local id as row 2'
	});
	add(row({ local_id: id(13), huc12: '07100004030' }, cover), {
		column: 'huc12',
		code: 'bad-format',
		severity: 'error',
		what: 'a watershed code with 11 digits instead of 12'
	});
	add(row({ local_id: id(14), extent_acres: '1,5' }, cover), {
		column: 'extent_acres',
		code: 'number-format',
		severity: 'error',
		what: 'a decimal comma (1,5) instead of a decimal point'
	});
	add(row({ local_id: id(15), latitude: 95 }, cover), {
		column: 'latitude',
		code: 'above-maximum',
		severity: 'error',
		what: 'a latitude above 90 degrees'
	});
	add(row({ local_id: id(16), extent_acres: 90000 }, cover), {
		column: 'extent_acres',
		code: 'acres-implausible',
		severity: 'warning',
		what: 'an implausibly large cover-crop acreage (accepted, flagged for review)'
	});
	add(row({ local_id: id(17), notes: '=HYPERLINK("http://example.org","see plan")' }, cover), {
		column: 'notes',
		code: 'formula-in-cell',
		severity: 'warning',
		what: 'a spreadsheet formula in the notes (kept as plain text, flagged)'
	});

	writeFileSync(path.join(DIR, 'mistakes.csv'), toCsv(rows));
	writeFileSync(path.join(DIR, 'mistakes.json'), JSON.stringify({ file: 'mistakes.csv', district: 'BLH', mistakes }, null, '\t') + '\n');
	console.error(`wrote clean.csv (${clean.length}), clean.xlsx (${xlsxRows.length}), mistakes.csv (${rows.length} rows, ${mistakes.length} mistakes)`);
}

await main();
