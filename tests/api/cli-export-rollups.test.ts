// `runnel export rollups`: the hub's rollups streamed through the CLI — an XLSX workbook on stdout
// (`-o -`) that exceljs reads back with the same totals as the API's JSON, and the same for CSV.
import ExcelJS from 'exceljs';
import { parse } from 'csv-parse/sync';
import { Readable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_TOKENS, startApp } from '../helpers/app';
import { runCli } from '../helpers/cli';

let app: { origin: string; close: () => Promise<void> };
beforeAll(async () => {
	app = await startApp();
});
afterAll(async () => {
	await app?.close();
});

interface Measures {
	fy: number;
	practices: number;
	credited_acres: number;
	cost_usd: number;
	n_lb_yr_mean: number;
	p_lb_yr_mean: number;
}
interface Answer {
	groupings: Array<{ group: string[]; cells: Measures[]; totals: Measures[] }>;
}

/** The API's JSON answer (waiting while the hub is still computing: 202 + Retry-After). */
async function apiRollups(token: string, query: string): Promise<Answer> {
	for (let i = 0; i < 120; i++) {
		const res = await fetch(`${app.origin}/api/v1/rollups?${query}`, { headers: { authorization: `Bearer ${token}` } });
		if (res.status === 200) return (await res.json()) as Answer;
		expect(res.status, await res.text()).toBe(202);
		await new Promise((r) => setTimeout(r, 1000));
	}
	throw new Error('rollups still pending after 2 minutes');
}

const HEADERS = {
	fy: 'FY',
	row: 'Row',
	practices: 'Practices',
	acres: 'Credited acres',
	cost: 'Cost (USD)',
	n: 'N reduction, lb/yr (mean)',
	p: 'P reduction, lb/yr (mean)'
};

function expectSameTotals(fromFile: Map<number, Record<string, number>>, api: Measures[]) {
	expect(api.length).toBeGreaterThan(0);
	expect([...fromFile.keys()].sort()).toEqual(api.map((t) => t.fy).sort());
	for (const t of api) {
		const f = fromFile.get(t.fy)!;
		expect(f.practices, `FY${t.fy} practices`).toBe(t.practices);
		expect(f.acres, `FY${t.fy} acres`).toBeCloseTo(t.credited_acres, 6);
		expect(f.cost, `FY${t.fy} cost`).toBeCloseTo(t.cost_usd, 6);
		expect(f.n, `FY${t.fy} N`).toBeCloseTo(t.n_lb_yr_mean, 6);
		expect(f.p, `FY${t.fy} P`).toBeCloseTo(t.p_lb_yr_mean, 6);
	}
}

describe('runnel export rollups', () => {
	it('--format xlsx -o -: a workbook on stdout with the same totals as the API, one sheet per grouping', async () => {
		const r = await runCli(
			['export', 'rollups', '--format', 'xlsx', '--fy', '2020..2027', '--group', 'county,fy,practice', '--group', 'district', '-o', '-'],
			{
				env: { RUNNEL_URL: app.origin, RUNNEL_TOKEN: DEMO_TOKENS.manager },
				timeoutMs: 180_000
			}
		);
		expect(r.code, r.stderr).toBe(0);
		expect(r.stdoutBytes.subarray(0, 2).toString()).toBe('PK');
		const api = await apiRollups(DEMO_TOKENS.manager, 'fy=2020..2027&group=county,fy,practice|district');
		expect(api.groupings).toHaveLength(2);

		const wb = new ExcelJS.Workbook();
		await wb.xlsx.read(Readable.from(r.stdoutBytes));
		const sheets = wb.worksheets.filter((ws) => ws.name.startsWith('By '));
		expect(sheets).toHaveLength(2);
		for (const [i, ws] of sheets.entries()) {
			const head = (ws.getRow(1).values as unknown[]).map((v) => (v === undefined ? '' : String(v)));
			const col = (name: string) => {
				const c = head.indexOf(name);
				expect(c, `${ws.name}: column ${name}`).toBeGreaterThan(0);
				return c;
			};
			const totals = new Map<number, Record<string, number>>();
			let cells = 0;
			ws.eachRow((row, n) => {
				if (n === 1) return;
				const v = (name: string) => Number(row.getCell(col(name)).value ?? 0);
				if (row.getCell(col(HEADERS.row)).value === 'total')
					totals.set(v(HEADERS.fy), {
						practices: v(HEADERS.practices),
						acres: v(HEADERS.acres),
						cost: v(HEADERS.cost),
						n: v(HEADERS.n),
						p: v(HEADERS.p)
					});
				else cells++;
			});
			expect(cells).toBe(api.groupings[i].cells.length);
			expectSameTotals(totals, api.groupings[i].totals);
		}
		expect(wb.worksheets.map((w) => w.name)).toContain('Method and sources');
	});

	it('--format csv: the same totals, as a district sees its own', async () => {
		const r = await runCli(['export', 'rollups', '--format', 'csv', '--fy', '2022..2026'], {
			env: { RUNNEL_URL: app.origin, RUNNEL_TOKEN: DEMO_TOKENS.district },
			timeoutMs: 180_000
		});
		expect(r.code, r.stderr).toBe(0);
		const rows = parse(r.stdoutBytes, { columns: true, bom: true }) as Array<Record<string, string>>;
		const totals = new Map<number, Record<string, number>>();
		for (const row of rows.filter((x) => x[HEADERS.row] === 'total'))
			totals.set(Number(row[HEADERS.fy]), {
				practices: Number(row[HEADERS.practices]),
				acres: Number(row[HEADERS.acres]),
				cost: Number(row[HEADERS.cost]),
				n: Number(row[HEADERS.n]),
				p: Number(row[HEADERS.p])
			});
		const api = await apiRollups(DEMO_TOKENS.district, 'fy=2022..2026');
		expectSameTotals(totals, api.groupings[0].totals);
	});

	it('a grouping the hub refuses: its 400 problem and the field error on stderr, exit 1, nothing on stdout', async () => {
		const r = await runCli(['export', 'rollups', '--group', 'county,huc8'], {
			env: { RUNNEL_URL: app.origin, RUNNEL_TOKEN: DEMO_TOKENS.researcher }
		});
		expect(r.code).toBe(1);
		expect(r.stderr).toMatch(/HTTP 400/);
		expect(r.stderr).toMatch(/#\/query\/group: .*county or by HUC-8/);
		expect(r.stdout).toBe('');
	});
});
