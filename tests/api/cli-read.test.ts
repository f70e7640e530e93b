// Reading back from the hub with the real CLI: `batches`, `records`, and `export records` streamed as
// CSV, NDJSON and XLSX (to a file or stdout), compared with the API and the database.
import ExcelJS from 'exceljs';
import { parse } from 'csv-parse/sync';
import { existsSync, mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_TOKENS, startApp } from '../helpers/app';
import { allFindings, BASIC_HEADER, BLH_COUNTY, closeTestDb, count, csv, uniquePrefix } from '../helpers/batches';
import { runCli } from '../helpers/cli';

let app: { origin: string; close: () => Promise<void> };
const dir = mkdtempSync(path.join(os.tmpdir(), 'runnel-cli-read-'));
const env = () => ({ env: { RUNNEL_URL: app.origin, RUNNEL_TOKEN: DEMO_TOKENS.district } });
let prefix: string;
let goodBatch: string;
let badBatch: string;

beforeAll(async () => {
	app = await startApp();
	prefix = uniquePrefix('RD');
	const good = path.join(dir, 'good.csv');
	writeFileSync(
		good,
		csv(BASIC_HEADER, [
			[`${prefix}-1`, '340', BLH_COUNTY, '2024-10-01', '', '', '50', ''],
			[`${prefix}-2`, '605', BLH_COUNTY, '2023-03-15', '', '', '', '45.5']
		])
	);
	const bad = path.join(dir, 'bad.csv');
	writeFileSync(bad, csv(BASIC_HEADER, [[`${prefix}-3`, '340', BLH_COUNTY, '2024-13-01', '', '', '50', '']]));
	const g = await runCli(['upload', '--wait', '--json', good], env());
	expect(g.code, g.stderr).toBe(0);
	goodBatch = JSON.parse(g.stdout)[0].batch.id;
	const b = await runCli(['upload', '--wait', '--json', '--mode', 'valid', bad], env());
	expect(b.code, b.stderr).toBe(2);
	badBatch = JSON.parse(b.stdout)[0].batch.id;
});

afterAll(async () => {
	await app?.close();
	await closeTestDb();
});

const blhRecords = () => count(`select count(*) as n from records r join districts d on d.id = r.district_id where d.code = 'BLH'`);

describe('runnel batches', () => {
	it('lists the newest batches (table, and --json)', async () => {
		const t = await runCli(['batches', '--limit', '5'], env());
		expect(t.code, t.stderr).toBe(0);
		expect(t.stdout.split('\n')[0]).toMatch(/^ID\s+DISTRICT\s+MODE\s+STATUS/);
		expect(t.stdout).toMatch(new RegExp(`^${badBatch}\\s+BLH\\s+valid\\s+done`, 'm'));
		const j = await runCli(['batches', '--json', '--limit', '3'], env());
		const list = JSON.parse(j.stdout) as Array<{ id: string }>;
		expect(list).toHaveLength(3);
		expect(list.map((b) => b.id)).toContain(badBatch);
	});

	it('one batch: its summary, and its outcome as the exit code', async () => {
		const ok = await runCli(['batches', goodBatch], env());
		expect(ok.code).toBe(0);
		expect(ok.stdout).toMatch(new RegExp(`^good\\.csv: batch ${goodBatch} done`));
		const bad = await runCli(['batches', badBatch], env());
		expect(bad.code).toBe(2);
	});

	it('--findings prints what the API lists, compiler-style or as JSON', async () => {
		const api = await allFindings(DEMO_TOKENS.district, badBatch);
		expect(api.length).toBeGreaterThan(0);
		const text = await runCli(['batches', badBatch, '--findings'], env());
		expect(text.code).toBe(2);
		expect(text.stdout.trim().split('\n')).toEqual(
			api.map((f) => `bad.csv:${f.row}:${f.column_number}: ${f.severity} ${f.code}: ${f.message}`)
		);
		const json = await runCli(['batches', badBatch, '--findings', '--json'], env());
		expect(JSON.parse(json.stdout)).toEqual(api);
	});

	it('another district cannot read the batch (exit 1: not found, no leak)', async () => {
		const r = await runCli(['batches', goodBatch], { env: { RUNNEL_URL: app.origin, RUNNEL_TOKEN: DEMO_TOKENS.district2 } });
		expect(r.code).toBe(1);
		expect(r.stderr).toMatch(/HTTP 404/);
		expect(r.stdout).toBe('');
	});
});

describe('runnel records', () => {
	it('filters by local id (--json) and shows one record with its versions', async () => {
		const r = await runCli(['records', '--local-id', `${prefix}-2`, '--json'], env());
		expect(r.code, r.stderr).toBe(0);
		const list = JSON.parse(r.stdout);
		expect(list).toHaveLength(1);
		expect(list[0]).toMatchObject({ local_id: `${prefix}-2`, practice_code: '605', drainage_area_acres: 45.5 });
		const one = await runCli(['records', list[0].id], env());
		expect(one.code).toBe(0);
		expect(one.stdout).toContain(`record ${list[0].id}: BLH ${prefix}-2 (practice 605, installed, version 1)`);
		expect(one.stdout).toMatch(new RegExp(`^  1  \\d{4}-\\d{2}-\\d{2} [\\d:]+  batch ${goodBatch}`, 'm'));
	});

	it('a table with a limit, and a hint when more exist', async () => {
		const r = await runCli(['records', '--limit', '3'], env());
		expect(r.code).toBe(0);
		expect(r.stdout.trim().split('\n')).toHaveLength(4);
		expect(r.stderr).toMatch(/first 3/);
	});
});

describe('runnel export records (streamed page by page)', () => {
	it('CSV to a file: every record of the district, once, with the header', async () => {
		const out = path.join(dir, 'records.csv');
		const r = await runCli(['export', 'records', '--format', 'csv', '-o', out], env());
		expect(r.code, r.stderr).toBe(0);
		const rows = parse(readFileSync(out), { columns: true }) as Array<Record<string, string>>;
		expect(rows.length).toBe(await blhRecords());
		expect(new Set(rows.map((x) => x.id)).size).toBe(rows.length);
		expect(rows.find((x) => x.local_id === `${prefix}-1`)).toMatchObject({
			practice_code: '340',
			county_fips: BLH_COUNTY,
			extent_acres: '50'
		});
		expect(r.stderr).toContain(`${rows.length.toLocaleString('en-US')} records written to ${out}`);
		// Nothing left behind but the file itself.
		expect(readdirSync(dir).filter((f) => f.includes('.part-'))).toEqual([]);
	});

	it('NDJSON to stdout, one record per line; a fiscal-year range keeps exactly the records of those years', async () => {
		const lines = (text: string) =>
			text
				.trim()
				.split('\n')
				.map((l) => JSON.parse(l) as { id: string; fiscal_year: number; local_id: string });
		const all = await runCli(['export', 'records', '--format', 'ndjson'], env());
		expect(all.code, all.stderr).toBe(0);
		const every = lines(all.stdout);
		expect(every.length).toBe(await blhRecords());
		const r = await runCli(['export', 'records', '--format', 'ndjson', '--fy', '2024..2025'], env());
		expect(r.code, r.stderr).toBe(0);
		const some = lines(r.stdout);
		const expected = every.filter((x) => x.fiscal_year >= 2024 && x.fiscal_year <= 2025).map((x) => x.id);
		expect(expected.length).toBeGreaterThan(0);
		expect(expected.length).toBeLessThan(every.length);
		expect(some.map((x) => x.id).sort()).toEqual(expected.sort());
		expect(some.some((x) => x.local_id === `${prefix}-1`)).toBe(true); // installed 2024-10-01: state FY2025
	});

	it('XLSX to stdout (-o -): a workbook exceljs reads back, same rows as the CSV', async () => {
		const r = await runCli(['export', 'records', '--format', 'xlsx', '-o', '-'], env());
		expect(r.code, r.stderr).toBe(0);
		const wb = new ExcelJS.Workbook();
		await wb.xlsx.read(Readable.from(r.stdoutBytes));
		const ws = wb.getWorksheet('Records')!;
		expect(ws.getRow(1).getCell(1).value).toBe('id');
		expect(ws.actualRowCount - 1).toBe(await blhRecords());
	});

	it('an output folder that does not exist: exit 1, no half file', async () => {
		const r = await runCli(['export', 'records', '-o', path.join(dir, 'nope', 'x.csv')], env());
		expect(r.code).toBe(1);
		expect(existsSync(path.join(dir, 'nope'))).toBe(false);
	});
});
