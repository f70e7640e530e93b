// `runnel export records|rollups|dataset`: streamed to a file (-o FILE) or stdout (-o - or no -o),
// never held whole. Rollups and the dataset come from the hub already formatted and are copied through;
// records are fetched page by page and written as CSV, NDJSON or XLSX as the pages arrive.
import { stringify } from 'csv-stringify';
import { once } from 'node:events';
import type { Writable } from 'node:stream';
import { Option, type Command } from 'commander';
import type { Context } from '../context';
import { CliError, EXIT, UsageError } from '../exit-codes';
import { parseRetryAfter } from '../backoff';
import { readText, type Query } from '../http';
import { setTimeout as delay } from 'node:timers/promises';
import { fyParam, parseFyRange, type FyRange } from '../fiscal-years';
import { openSink, type Sink } from '../sink';
import type { Registry } from '../program';
import { addRecordFilters, recordQuery, type RecordFilters, type RecordRow } from './records';

type ExportFormat = 'csv' | 'xlsx' | 'ndjson' | 'json';

interface ExportOptions {
	format: ExportFormat;
	fy?: FyRange;
	output?: string;
}

/** The columns of a records export, in order, and how each is read from a record. */
export const RECORD_COLUMNS: Array<[string, (r: RecordRow) => string | number | null]> = [
	['id', (r) => r.id],
	['district_code', (r) => r.district.code],
	['local_id', (r) => r.local_id],
	['version', (r) => r.version],
	['status', (r) => r.status],
	['practice_code', (r) => r.practice_code],
	['county_fips', (r) => r.county_fips],
	['installed_on', (r) => r.installed_on],
	['withdrawn_on', (r) => r.withdrawn_on],
	['fiscal_year', (r) => r.fiscal_year],
	['extent_acres', (r) => r.extent_acres],
	['drainage_area_acres', (r) => r.drainage_area_acres],
	['field_id', (r) => r.field_id],
	['operation_id', (r) => r.operation_id],
	['huc12', (r) => r.huc12],
	['cost_total_usd', (r) => r.cost_total_usd],
	['cost_share_usd', (r) => r.cost_share_usd],
	['funding_program', (r) => r.funding_program],
	['warnings', (r) => r.warnings],
	['updated_at', (r) => r.updated_at]
];

/**
 * A text cell a spreadsheet would run as a formula (=, +, -, @, tab, carriage return first) gets a
 * leading apostrophe (OWASP "CSV Injection"); numbers are left alone.
 */
export function spreadsheetSafe(v: string | number | null): string | number | null {
	if (typeof v === 'string' && /^[=+\-@\t\r]/.test(v)) return `'${v}`;
	return v;
}

interface RowWriter {
	write(r: RecordRow): Promise<void>;
	end(): Promise<void>;
}

async function write(stream: Writable, chunk: string): Promise<void> {
	if (!stream.write(chunk)) await once(stream, 'drain');
}

async function recordWriter(format: ExportFormat, sink: Sink): Promise<RowWriter> {
	const values = (r: RecordRow) => RECORD_COLUMNS.map(([, get]) => spreadsheetSafe(get(r)));
	switch (format) {
		case 'ndjson':
			return { write: (r) => write(sink.stream, JSON.stringify(r) + '\n'), end: async () => {} };
		case 'csv': {
			const csv = stringify({ header: true, columns: RECORD_COLUMNS.map(([name]) => name) });
			const done = sink.pour(csv);
			return {
				write: async (r) => {
					if (!csv.write(values(r))) await once(csv, 'drain');
				},
				end: async () => {
					csv.end();
					await done;
				}
			};
		}
		case 'xlsx': {
			// exceljs is large: loaded only when a workbook is asked for.
			const { default: ExcelJS } = await import('exceljs');
			const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ stream: sink.stream, useStyles: true, useSharedStrings: false });
			const ws = wb.addWorksheet('Records', { views: [{ state: 'frozen', ySplit: 1 }] });
			ws.columns = RECORD_COLUMNS.map(([name]) => ({ header: name, key: name, width: Math.max(10, name.length + 2) }));
			ws.getRow(1).font = { bold: true };
			return {
				write: async (r) => ws.addRow(values(r)).commit(),
				end: async () => {
					ws.commit();
					await wb.commit();
				}
			};
		}
		default:
			throw new UsageError(`records cannot be exported as ${format}; use csv, xlsx or ndjson.`);
	}
}

async function exportRecords(ctx: Context, opts: ExportOptions & RecordFilters): Promise<number> {
	const client = ctx.client();
	const sink = openSink(ctx.io, opts.output, { binary: opts.format === 'xlsx' });
	let n = 0;
	try {
		const writer = await recordWriter(opts.format, sink);
		const years: Array<number | undefined> = opts.fy ? range(opts.fy.from, opts.fy.to) : [undefined];
		for (const fy of years) {
			for await (const rec of client.pages<RecordRow>('/api/v1/records', { ...recordQuery({ ...opts, fy }), limit: 500 })) {
				await writer.write(rec);
				n++;
			}
		}
		await writer.end();
		await sink.commit();
	} catch (e) {
		sink.abort();
		throw e;
	}
	ctx.ui.info(`${n.toLocaleString('en-US')} records written to ${sink.label}`);
	return EXIT.ok;
}

function range(a: number, b: number): number[] {
	return Array.from({ length: b - a + 1 }, (_, i) => a + i);
}

/** How long an export waits for the hub to finish computing (it answers 202 + Retry-After meanwhile). */
const PENDING_LIMIT_MS = 10 * 60 * 1000;

/** Copies a server-formatted export into the sink, waiting while the hub answers 202 (still computing). */
async function passThrough(ctx: Context, path: string, query: Query, opts: ExportOptions): Promise<number> {
	const client = ctx.client();
	const sink = openSink(ctx.io, opts.output, { binary: opts.format === 'xlsx' });
	try {
		const started = Date.now();
		let res = await client.request({ path, query: { ...query, format: opts.format }, headers: { accept: ACCEPT[opts.format] } });
		while (res.status === 202) {
			await readText(res.body);
			if (Date.now() - started > PENDING_LIMIT_MS)
				throw new CliError('the hub is still computing this export after 10 minutes; try again later.');
			const wait = parseRetryAfter(res.headers['retry-after'] as string | undefined) ?? 2000;
			ctx.ui.info(`the hub is still computing; asking again in ${Math.round(wait / 1000)} s`);
			await delay(Math.min(30_000, Math.max(100, wait)));
			res = await client.request({ path, query: { ...query, format: opts.format }, headers: { accept: ACCEPT[opts.format] } });
		}
		await sink.pour(res.body);
		if (!res.body.complete) throw new CliError('the connection closed before the export was complete; nothing was kept.');
		await sink.commit();
	} catch (e) {
		sink.abort();
		throw e;
	}
	if (!sink.toStdout) ctx.ui.info(`export written to ${sink.label}`);
	return EXIT.ok;
}

const ACCEPT: Record<ExportFormat, string> = {
	csv: 'text/csv',
	ndjson: 'application/x-ndjson',
	json: 'application/json',
	xlsx: 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet'
};

interface RollupOptions extends ExportOptions {
	group?: string[];
	basis?: string;
	fyBasis?: string;
	method?: string;
	district?: string;
	practice?: string;
	county?: string;
}

const outputOption = () => new Option('-o, --output <file>', 'write to this file (- for stdout, the default)');
const fyOption = () => new Option('--fy <years>', 'a fiscal year or a range, e.g. 2020..2027').argParser(parseFyRange);

export function registerExport(program: Command, r: Registry): Command {
	const exp = program
		.command('export')
		.description('stream records, rollups or the research dataset to a file or stdout')
		.addHelpText(
			'after',
			`
Examples:
  $ runnel export records --format csv -o records.csv
  $ runnel export rollups --fy 2020..2027 --group county,fy,practice --format xlsx -o rollups.xlsx
  $ runnel export rollups --format csv | head
  $ runnel export dataset --format ndjson --fy 2026 -o dataset.ndjson`
		);

	addRecordFilters(
		exp
			.command('records')
			.description('practice records you may see, page by page (CSV, XLSX or NDJSON)')
			.addOption(new Option('--format <format>', 'output format').choices(['csv', 'xlsx', 'ndjson']).default('csv'))
			.addOption(fyOption())
			.addOption(outputOption())
	)
		.addHelpText(
			'after',
			`
Examples:
  $ runnel export records -o records.csv
  $ runnel export records --practice 605 --fy 2024..2027 --format xlsx -o bioreactors.xlsx
  $ runnel export records --format ndjson | jq .local_id`
		)
		.action(r.action((ctx, opts) => exportRecords(ctx, opts as ExportOptions & RecordFilters)));

	exp
		.command('rollups')
		.description('sums by county × fiscal year × practice (as the hub computes them)')
		.addOption(new Option('--format <format>', 'output format').choices(['csv', 'xlsx', 'json']).default('csv'))
		.addOption(fyOption())
		.option(
			'--group <dims>',
			'a grouping, e.g. county,fy,practice or huc8,practice (repeat for more sheets in XLSX)',
			(v: string, prev: string[] = []) => [...prev, v]
		)
		.addOption(new Option('--basis <basis>', 'in_service or installed').choices(['in_service', 'installed']))
		.addOption(new Option('--fy-basis <basis>', 'state or federal fiscal years').choices(['state', 'federal']))
		.option('--method <version>', 'a reduction method version (default: the active one)')
		.option('--district <code>', 'only this district')
		.option('--practice <code>', 'only this practice code')
		.option('--county <fips>', 'only this county')
		.addOption(outputOption())
		.addHelpText(
			'after',
			`
Examples:
  $ runnel export rollups --fy 2020..2027 --format xlsx -o rollups.xlsx
  $ runnel export rollups --group county,practice --group district --format xlsx -o -  > r.xlsx
  $ runnel export rollups --group huc8 --basis installed --format csv`
		)
		.action(
			r.action((ctx, o) => {
				const opts = o as RollupOptions;
				return passThrough(
					ctx,
					'/api/v1/rollups',
					{
						fy: opts.fy ? fyParam(opts.fy) : undefined,
						group: opts.group?.join('|'),
						basis: opts.basis,
						fy_basis: opts.fyBasis,
						method: opts.method,
						district: opts.district,
						practice: opts.practice,
						county: opts.county
					},
					opts
				);
			})
		);

	exp
		.command('dataset')
		.description('the live anonymised research dataset (CSV or NDJSON)')
		.addOption(new Option('--format <format>', 'output format').choices(['csv', 'ndjson']).default('csv'))
		.addOption(fyOption())
		.option('--practice <code>', 'only this practice code')
		.option('--county <fips>', 'only this county')
		.addOption(outputOption())
		.addHelpText(
			'after',
			`
Examples:
  $ runnel export dataset -o dataset.csv
  $ runnel export dataset --format ndjson --fy 2026 --practice 605`
		)
		.action(
			r.action((ctx, o) => {
				const opts = o as ExportOptions & { practice?: string; county?: string };
				return passThrough(
					ctx,
					'/api/v1/dataset/records',
					{ fy: opts.fy ? fyParam(opts.fy) : undefined, practice: opts.practice, county: opts.county },
					opts
				);
			})
		);
	return exp;
}
