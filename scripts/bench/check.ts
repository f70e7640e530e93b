// `npm run bench -- check`: the cost of reading and checking an upload, as ratios against a bare
// csv-parse of the same bytes in the same process. 100,000 valid rows (a quarter with coordinates, so
// the point-in-county test runs), as CSV and as XLSX. Prints the ratios and the peak RSS.
import ExcelJS from 'exceljs';
import { parse } from 'csv-parse';
import { createReadStream, mkdtempSync, rmSync, statSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import { geoCentroid } from 'd3-geo';
import { checkFile, type CheckStats } from '../../src/lib/server/ingest/check-file';
import { offlineCheckContext } from '../../src/lib/server/ingest/context';
import { stateCountyShapes } from '../../src/lib/server/ingest/reference';
import { PRACTICE_CATALOG } from '../../src/lib/domain/practice-catalog';

const ROWS = Number(process.env.BENCH_ROWS ?? 100_000);
const COUNTIES = ['19109', '19063', '19147'];
const HEADER = [
	'local_id',
	'practice_code',
	'county_fips',
	'installed_on',
	'extent_acres',
	'drainage_area_acres',
	'field_id',
	'operation_id',
	'latitude',
	'longitude',
	'cost_total_usd',
	'cost_share_usd',
	'notes'
];

function rowValues(i: number, centroids: Map<string, [number, number]>): Array<string | number> {
	const p = PRACTICE_CATALOG[i % PRACTICE_CATALOG.length];
	const county = COUNTIES[i % COUNTIES.length];
	const acres = 10 + (i % 150) + 0.25;
	const [lon, lat] = centroids.get(county)!;
	const day = String((i % 28) + 1).padStart(2, '0');
	const month = String((i % 12) + 1).padStart(2, '0');
	return [
		`B-${i}`,
		p.code,
		county,
		`${2016 + (i % 9)}-${month}-${day}`,
		p.credited_basis === 'extent_acres' ? acres : '',
		p.credited_basis === 'drainage_area_acres' ? Math.min(acres, 200) : '',
		`F-${i % 5000}`,
		`OP-${i % 900}`,
		i % 4 === 0 ? lat.toFixed(5) : '',
		i % 4 === 0 ? lon.toFixed(5) : '',
		1000 + (i % 5000),
		500 + (i % 500),
		i % 10 === 0 ? 'Installed with the landowner; outlet checked.' : ''
	];
}

async function* csvBytes(centroids: Map<string, [number, number]>) {
	yield Buffer.from(HEADER.join(',') + '\n');
	let batch: string[] = [];
	for (let i = 0; i < ROWS; i++) {
		batch.push(rowValues(i, centroids).join(','));
		if (batch.length === 2000) {
			yield Buffer.from(batch.join('\n') + '\n');
			batch = [];
		}
	}
	if (batch.length) yield Buffer.from(batch.join('\n') + '\n');
}

async function time<T>(fn: () => Promise<T>): Promise<{ ms: number; value: T }> {
	const t = performance.now();
	const value = await fn();
	return { ms: performance.now() - t, value };
}

async function drainCheck(
	input: AsyncIterable<Uint8Array> | NodeJS.ReadableStream,
	format: 'csv' | 'xlsx',
	ctx: ReturnType<typeof offlineCheckContext>
) {
	let stats: CheckStats | undefined;
	for await (const e of checkFile(input, format, ctx)) if (e.kind === 'end') stats = e.stats;
	return stats!;
}

export async function run(): Promise<void> {
	const shapes = stateCountyShapes('19');
	const centroids = new Map(
		shapes.features.filter((f) => COUNTIES.includes(String(f.id))).map((f) => [String(f.id), geoCentroid(f) as [number, number]])
	);
	const ctx = offlineCheckContext({ stateFips: '19', districtCounties: new Set(COUNTIES), today: '2026-06-01' });

	const baseline = await time(async () => {
		let n = 0;
		for await (const _ of Readable.from(csvBytes(centroids)).pipe(parse())) n++;
		return n;
	});
	const csv = await time(() => drainCheck(csvBytes(centroids), 'csv', ctx));
	if (csv.value.accepted !== ROWS)
		throw new Error(`expected ${ROWS} accepted rows, got ${csv.value.accepted}: ${JSON.stringify(csv.value.findings)}`);

	const dir = mkdtempSync(path.join(os.tmpdir(), 'runnel-bench-'));
	try {
		const file = path.join(dir, 'rows.xlsx');
		const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ filename: file, useSharedStrings: true });
		const ws = wb.addWorksheet('Records');
		ws.addRow(HEADER).commit();
		for (let i = 0; i < ROWS; i++) ws.addRow(rowValues(i, centroids)).commit();
		ws.commit();
		await wb.commit();
		const xlsx = await time(() => drainCheck(createReadStream(file), 'xlsx', ctx));
		if (xlsx.value.accepted !== ROWS) throw new Error(`XLSX: expected ${ROWS} accepted rows, got ${xlsx.value.accepted}`);
		const mb = (b: number) => (b / 1024 / 1024).toFixed(1);
		console.log(`check: ${ROWS} rows; CSV ${mb(csv.value.bytes)} MB, XLSX ${mb(statSync(file).size)} MB`);
		console.log(`check: bare csv-parse            ${baseline.ms.toFixed(0)} ms (baseline, ${baseline.value - 1} rows)`);
		console.log(`check: CSV read + check          ${csv.ms.toFixed(0)} ms  ratio ${(csv.ms / baseline.ms).toFixed(2)}`);
		console.log(`check: XLSX read + check         ${xlsx.ms.toFixed(0)} ms  ratio ${(xlsx.ms / baseline.ms).toFixed(2)}`);
		console.log(`check: peak RSS ${(process.resourceUsage().maxRSS / 1024).toFixed(0)} MB`);
	} finally {
		rmSync(dir, { recursive: true, force: true });
	}
}
