// `runnel schema`: the published JSON Schema and the CSV/XLSX templates, byte for byte what the hub
// serves, to stdout or a file; no token needed (they are public).
import ExcelJS from 'exceljs';
import { mkdtempSync, readFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startApp } from '../helpers/app';
import { runCli } from '../helpers/cli';

let app: { origin: string; close: () => Promise<void> };
const dir = mkdtempSync(path.join(os.tmpdir(), 'runnel-cli-schema-'));
beforeAll(async () => {
	app = await startApp();
});
afterAll(async () => {
	await app?.close();
});

const fromHub = async (p: string) => Buffer.from(await (await fetch(`${app.origin}${p}`)).arrayBuffer());

describe('runnel schema', () => {
	it('the JSON Schema on stdout, without a token', async () => {
		const r = await runCli(['schema'], { env: { RUNNEL_URL: app.origin } });
		expect(r.code, r.stderr).toBe(0);
		expect(r.stdoutBytes.equals(await fromHub('/api/v1/schema/practice-record.json'))).toBe(true);
		const schema = JSON.parse(r.stdout);
		expect(schema.$schema).toMatch(/2020-12/);
		expect(schema.$id).toBeTruthy();
	});

	it('the CSV template to a file', async () => {
		const out = path.join(dir, 'template.csv');
		const r = await runCli(['schema', '--format', 'csv-template', '-o', out], { env: { RUNNEL_URL: app.origin } });
		expect(r.code, r.stderr).toBe(0);
		expect(readFileSync(out).equals(await fromHub('/api/v1/schema/practice-record.csv'))).toBe(true);
		expect(readFileSync(out, 'utf8')).toMatch(/local_id,practice_code,county_fips,installed_on/);
	});

	it('the XLSX template to stdout (-o -) is a workbook exceljs opens', async () => {
		const r = await runCli(['schema', '--format', 'xlsx-template', '-o', '-'], { env: { RUNNEL_URL: app.origin } });
		expect(r.code, r.stderr).toBe(0);
		expect(r.stdoutBytes.equals(await fromHub('/api/v1/schema/practice-record.xlsx'))).toBe(true);
		const wb = new ExcelJS.Workbook();
		await wb.xlsx.read(Readable.from(r.stdoutBytes));
		const headers = (wb.worksheets[0].getRow(1).values as unknown[]).filter(Boolean);
		expect(headers).toContain('local_id');
	});
});
