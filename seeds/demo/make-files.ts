// Writes the demo upload files committed beside this script (run again only when they must change):
//   clean.csv     — 60 valid Bluestem Hills (BLH) records, every column of schema v1 in the header;
//   clean.xlsx    — 40 more valid BLH records on the first sheet "Practices" (other local ids);
//   mistakes.csv  — 18 rows with deliberate mistakes of different kinds, documented in mistakes.json.
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
	const fault = (column: string, code: string, severity: Mistake['severity'], what: string) => ({ column, code, severity, what });
	// One mistake per row, in file order: the values that differ from the cover-crop row (or the bioreactor
	// row, when given) and the mistake. The n-th of them has local id n + 1 unless it sets its own.
	const MISTAKES: Array<[DemoRow, Omit<Mistake, 'row'>, DemoRow?]> = [
		[{ practice_code: '999' }, fault('practice_code', 'not-in-list', 'error', 'a practice code that is not in the practice list')],
		[
			{ county_fips: '19033' },
			fault('county_fips', 'county-not-served', 'error', "another district's county (Cerro Gordo is served by Kettle Prairie)")
		],
		[{ county_fips: '1910' }, fault('county_fips', 'bad-format', 'error', 'a county code with four digits (the leading zero lost)')],
		[{ installed_on: '2026-02-30' }, fault('installed_on', 'bad-date', 'error', 'a date that does not exist (30 February)')],
		[{ installed_on: '03/15/2024' }, fault('installed_on', 'bad-date', 'error', 'a US-style date instead of YYYY-MM-DD')],
		[{ installed_on: '2031-05-01' }, fault('installed_on', 'date-in-future', 'error', 'an install date in the future')],
		[{ extent_acres: null }, fault('extent_acres', 'required-for-practice', 'error', 'acres missing for an in-field practice (cover crop)')],
		[{ drainage_area_acres: -12 }, fault('drainage_area_acres', 'below-minimum', 'error', 'a negative drainage area for a bioreactor'), bio],
		[
			{ cost_total_usd: 5000, cost_share_usd: 9000 },
			fault('cost_share_usd', 'share-exceeds-total', 'error', 'cost share larger than the total cost')
		],
		[
			{ status: 'withdrawn', withdrawn_on: null },
			fault('withdrawn_on', 'withdrawn-date-missing', 'error', 'withdrawn without the date it was withdrawn')
		],
		[{ local_id: id(1) }, fault('local_id', 'duplicate-local-id', 'error', 'the same local id as row 2')],
		[{ huc12: '07100004030' }, fault('huc12', 'bad-format', 'error', 'a watershed code with 11 digits instead of 12')],
		[{ extent_acres: '1,5' }, fault('extent_acres', 'number-format', 'error', 'a decimal comma (1,5) instead of a decimal point')],
		[{ latitude: 95 }, fault('latitude', 'above-maximum', 'error', 'a latitude above 90 degrees')],
		[
			{ extent_acres: 90000 },
			fault('extent_acres', 'acres-implausible', 'warning', 'an implausibly large cover-crop acreage (accepted, flagged for review)')
		],
		[
			{ notes: '=HYPERLINK("http://example.org","see plan")' },
			fault('notes', 'formula-in-cell', 'warning', 'a spreadsheet formula in the notes (kept as plain text, flagged)')
		],
		[
			{ bed_length_ft: 50, bed_width_ft: 10, bed_depth_ft: 3, main_diameter_in: 12 },
			fault(
				'bed_length_ft',
				'bioreactor-treats-under-15pct',
				'warning',
				'a bioreactor bed too small for its drained area (design screening; accepted, flagged for review)'
			),
			bio
		]
	];

	add(row({ local_id: id(1) }, cover));
	MISTAKES.forEach(([over, mistake, from], i) => add(row({ local_id: id(i + 2), ...over }, from ?? cover), mistake));

	writeFileSync(path.join(DIR, 'mistakes.csv'), toCsv(rows));
	writeFileSync(path.join(DIR, 'mistakes.json'), JSON.stringify({ file: 'mistakes.csv', district: 'BLH', mistakes }, null, '\t') + '\n');
	console.error(`wrote clean.csv (${clean.length}), clean.xlsx (${xlsxRows.length}), mistakes.csv (${rows.length} rows, ${mistakes.length} mistakes)`);
}

await main();
