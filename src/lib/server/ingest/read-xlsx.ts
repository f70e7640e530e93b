// XLSX rows through exceljs's streaming WorkbookReader. The upload is first written to a temporary
// file (disk, not memory) so zip-guard.ts can check the archive before any XML is parsed; the reader
// then streams it row by row. Formulas are never evaluated: a formula cell is read as its formula
// text (`=HYPERLINK(…)`) and the checker flags it (`formula-in-cell`).
import { createReadStream, createWriteStream } from 'node:fs';
import { mkdtemp, rm } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { createInflateRaw } from 'node:zlib';
import type { Finding } from '../../schema/findings';
import { cellRef } from '../../domain/cell-ref';
import { byteChunks } from './decode';
import { fileFinding, rowFinding, type ReadLimits, type ReadOptions, type RowEvent } from './row-events';
import { inspectZip, type ZipEntryInfo } from './zip-guard';

type Input = NodeJS.ReadableStream | AsyncIterable<Uint8Array>;

/** A cell value as the checker sees it: string, number, boolean, Date or null. Never a computed result. */
export function xlsxCellValue(v: unknown): unknown {
	if (v === null || v === undefined) return null;
	if (typeof v === 'string' || typeof v === 'number' || typeof v === 'boolean' || v instanceof Date) return v;
	if (typeof v === 'object') {
		const o = v as Record<string, unknown>;
		if (typeof o.formula === 'string') return `=${o.formula}`;
		if (typeof o.sharedFormula === 'string') return `=(formula shared with ${o.sharedFormula})`;
		if ('formula' in o || 'sharedFormula' in o) return '=(formula)';
		if (Array.isArray(o.richText)) return (o.richText as Array<{ text?: string }>).map((r) => r.text ?? '').join('');
		if (typeof o.text === 'string') return o.text; // hyperlink cell: its text
		if (typeof o.error === 'string') return o.error; // #N/A, #REF!…
	}
	return String(v);
}

const headerText = (v: unknown): string => {
	const x = xlsxCellValue(v);
	if (x === null) return '';
	if (x instanceof Date) return x.toISOString().slice(0, 10);
	return String(x);
};

interface StreamingWorkbookReader extends AsyncIterable<StreamingWorksheet> {
	model?: { sheets?: Array<{ name: string; state?: string }> };
	// exceljs's own parsers of the workbook part and its relationships (they read any byte stream).
	_parseWorkbook(entry: Readable): Promise<void>;
	_parseRels(entry: Readable): Promise<void>;
	_parseStyles(entry: Readable): Promise<void>;
	_parseSharedStrings(entry: Readable): AsyncIterable<unknown>;
	options: { styles: string; sharedStrings: string };
	workbookRels?: unknown[];
	sharedStrings?: unknown[];
}

/** One part of a checked archive (zip-guard has inflated it once within its declared size), streamed and
 * inflated from the data range zip-guard found for its entry. */
function partStream(file: string, e: ZipEntryInfo): Readable {
	if (e.compressedSize === 0) return Readable.from([]);
	const raw = createReadStream(file, { start: e.dataStart, end: e.dataStart + e.compressedSize - 1 });
	if (e.method !== 8) return raw;
	const inflate = createInflateRaw();
	raw.on('error', (err) => inflate.destroy(err));
	return raw.pipe(inflate);
}
interface StreamingWorksheet extends AsyncIterable<{ number: number; values: unknown[] }> {
	name: string;
}

export async function* readXlsx(input: Input, opts: ReadOptions, limits: ReadLimits): AsyncGenerator<RowEvent> {
	const dir = await mkdtemp(path.join(os.tmpdir(), 'runnel-xlsx-'));
	const file = path.join(dir, 'upload.xlsx');
	let sourceSent = false;
	const source = (sheet: string | null): RowEvent[] => {
		if (sourceSent) return [];
		sourceSent = true;
		return [{ kind: 'source', encoding: 'utf-8', sheet }];
	};
	// Set once the upload is on disk: errors before that are the input stream's own (a client that hung
	// up) and are thrown; errors after it come from the workbook's contents and become a finding.
	let spooled = false;
	try {
		await pipeline(Readable.from(byteChunks(input)), createWriteStream(file));
		spooled = true;
		const verdict = await inspectZip(file, limits);
		if (!verdict.ok) {
			yield* source(null);
			yield { kind: 'finding', finding: fileFinding(verdict.code, verdict.message, { rule: 'xlsx' }) };
			return;
		}
		if (!verdict.entries.some((e) => e.name === 'xl/workbook.xml')) {
			yield* source(null);
			yield {
				kind: 'finding',
				finding: fileFinding(
					'xlsx-invalid',
					'This ZIP archive is not an Excel workbook (it has no xl/workbook.xml). Save the file from your spreadsheet as .xlsx.',
					{
						rule: 'xlsx'
					}
				)
			};
			return;
		}

		// exceljs is loaded on first use: CSV and JSON readers (and the CLI) do not pay for it.
		const { default: ExcelJS } = await import('exceljs');
		const stream = createReadStream(file);
		const reader = new ExcelJS.stream.xlsx.WorkbookReader(stream, {
			worksheets: 'emit',
			sharedStrings: 'cache',
			hyperlinks: 'ignore',
			styles: 'cache', // needed to tell date cells from numbers
			entries: 'ignore'
		}) as unknown as StreamingWorkbookReader;
		// exceljs's single streaming pass does not reliably deliver the archive's last entry before it parses
		// the sheets (exceljs issue #3064: "Cannot read properties of undefined (reading 'sheets')", seen here
		// under load), and spreadsheet writers often store xl/workbook.xml last. And when a sheet comes before
		// the shared strings, exceljs spools it to a temporary file of its own, which it deletes racing the
		// reader it has just opened on it when we skip that sheet (an uncaught ENOENT), and never deletes when
		// we stop early (a leak until the process exits). So every part a sheet depends on — relationships,
		// workbook, styles (they tell dates from numbers), shared strings — is read first, through the central
		// directory, by exceljs's own parsers, and the same entries are skipped when the single pass meets
		// them: the sheets then stream straight from the archive, with no temporary files.
		const partOf = (name: string) => verdict.entries.find((e) => e.name === name);
		const relsPart = partOf('xl/_rels/workbook.xml.rels');
		if (relsPart) await reader._parseRels(partStream(file, relsPart));
		else reader.workbookRels = [];
		await reader._parseWorkbook(partStream(file, partOf('xl/workbook.xml')!));
		const stylesPart = partOf('xl/styles.xml');
		if (stylesPart) await reader._parseStyles(partStream(file, stylesPart));
		const stringsPart = partOf('xl/sharedStrings.xml');
		if (stringsPart) for await (const _ of reader._parseSharedStrings(partStream(file, stringsPart)));
		else reader.sharedStrings = [];
		reader.options.styles = 'ignore';
		reader.options.sharedStrings = 'ignore';
		const seen: string[] = [];
		let found = false;
		try {
			for await (const ws of reader) {
				seen.push(ws.name);
				const first = reader.model?.sheets?.[0]?.name;
				const wanted = opts.sheet ?? first ?? null;
				if (wanted !== null ? ws.name !== wanted : seen.length > 1) continue;
				found = true;
				yield* source(ws.name);
				yield* readSheet(ws, limits);
				break;
			}
		} finally {
			stream.destroy();
		}
		if (!found) {
			yield* source(null);
			const names = (reader.model?.sheets?.map((s) => s.name) ?? seen).filter(Boolean);
			yield {
				kind: 'finding',
				finding: opts.sheet
					? fileFinding(
							'sheet-not-found',
							`The workbook has no sheet named "${opts.sheet}". Its sheets are: ${names.map((n) => `"${n}"`).join(', ') || 'none'}.`,
							{
								rule: 'sheet',
								expected: opts.sheet,
								found: names
							}
						)
					: fileFinding('empty-file', 'The workbook has no worksheet.', { rule: 'not-empty' })
			};
		}
	} catch (e) {
		// exceljs/unzipper/sax errors on a workbook that passed the ZIP checks: the XML inside is broken.
		if (spooled && e instanceof Error && !/ENOSPC|EACCES|EMFILE/.test(e.message)) {
			yield* source(null);
			yield {
				kind: 'finding',
				finding: fileFinding(
					'xlsx-invalid',
					`The workbook could not be read: its contents are damaged (${e.message.slice(0, 200)}). Open it in your spreadsheet and save it again.`,
					{
						rule: 'xlsx'
					}
				)
			};
			return;
		}
		throw e;
	} finally {
		await rm(dir, { recursive: true, force: true });
	}
}

async function* readSheet(ws: StreamingWorksheet, limits: ReadLimits): AsyncGenerator<RowEvent> {
	let header: string[] | null = null;
	let dataRows = 0;
	for await (const row of ws) {
		const cells = row.values ?? [];
		const rowNo = row.number;
		if (!header) {
			const texts: string[] = [];
			for (let i = 1; i < cells.length; i++) texts.push(headerText(cells[i]));
			while (texts.length > 0 && texts[texts.length - 1].trim() === '') texts.pop();
			if (texts.length === 0) continue;
			if (texts.length > limits.maxColumns) {
				yield {
					kind: 'finding',
					finding: fileFinding('too-many-columns', `The header row has ${texts.length} columns; the limit is ${limits.maxColumns}.`, {
						rule: 'max-columns',
						max: limits.maxColumns
					})
				};
				return;
			}
			header = texts;
			yield { kind: 'header', columns: texts, row: rowNo };
			continue;
		}
		const values: Record<string, unknown> = {};
		const findings: Finding[] = [];
		let any = false;
		for (let i = 1; i < cells.length; i++) {
			const v = xlsxCellValue(cells[i]);
			if (v === null || (typeof v === 'string' && v.trim() === '')) continue;
			any = true;
			if (i > header.length || header[i - 1].trim() === '') {
				findings.push(
					rowFinding(rowNo, 'cell-without-header', `Cell ${cellRef(i, rowNo)} has a value but its column has no header; it was ignored.`, {
						severity: 'warning',
						columnNumber: i,
						cell: cellRef(i, rowNo),
						rule: { rule: 'header' }
					})
				);
				continue;
			}
			if (typeof v === 'string' && v.length > limits.maxCellChars) {
				findings.push(
					rowFinding(
						rowNo,
						'cell-too-large',
						`This cell holds ${v.length} characters; the limit is ${limits.maxCellChars}. It was not read.`,
						{
							column: header[i - 1].trim(),
							columnNumber: i,
							cell: cellRef(i, rowNo),
							rule: { rule: 'max-cell-size', max: limits.maxCellChars }
						}
					)
				);
				continue;
			}
			if (!Object.hasOwn(values, header[i - 1])) values[header[i - 1]] = v;
		}
		if (!any) continue;
		dataRows++;
		yield findings.length > 0 ? { kind: 'row', row: rowNo, values, findings } : { kind: 'row', row: rowNo, values };
	}
	if (!header) yield { kind: 'finding', finding: fileFinding('empty-file', 'The sheet is empty.', { rule: 'not-empty' }) };
	else if (dataRows === 0)
		yield {
			kind: 'finding',
			finding: fileFinding('no-rows', 'The sheet has a header row but no data rows.', { rule: 'has-rows' }, 'warning')
		};
}
