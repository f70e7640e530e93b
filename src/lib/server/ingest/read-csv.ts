// CSV (RFC 4180) rows, streamed through csv-parse. Quoting is strict: a malformed quote stops the read
// with a file-level error naming the line, because after it we cannot be sure which cell is which.
import { parse, type CsvError } from 'csv-parse';
import { pipeline, Readable } from 'node:stream';
import { cellRef } from '../../domain/cell-ref';
import { byteChunks, detectEncoding, sniffBinary, SniffingDecoder } from './decode';
import { binaryFinding } from './binary';
import { fileFinding, peekBytes, rowFinding, windows1252Finding, type ReadLimits, type ReadOptions, type RowEvent } from './row-events';

const FATAL: Record<string, { code: string; message: (line: number) => string }> = {
	CSV_QUOTE_NOT_CLOSED: {
		code: 'csv-unclosed-quote',
		message: (line) =>
			`A quoted value is never closed: the file ends inside quotes that open at or before line ${line}. Nothing from that value on could be read. Check for a missing closing " in that row.`
	},
	CSV_INVALID_CLOSING_QUOTE: {
		code: 'csv-bad-quote',
		message: (line) =>
			`Line ${line}: a quoted value is followed by more text before the next comma. Quotes inside a value must be doubled ("" ). Nothing from this line on could be read.`
	},
	INVALID_OPENING_QUOTE: {
		code: 'csv-bad-quote',
		message: (line) =>
			`Line ${line}: a double quote appears inside a value that is not enclosed in quotes. Enclose the value in quotes and double the quote inside it, or let your spreadsheet save the CSV. Nothing from this line on could be read.`
	},
	CSV_MAX_RECORD_SIZE: {
		code: 'row-too-large',
		message: (line) =>
			`Line ${line} is larger than the limit for one row; a cell may hold pasted data or an unclosed quote. Nothing from this line on could be read.`
	}
};

export async function* readCsv(
	input: NodeJS.ReadableStream | AsyncIterable<Uint8Array>,
	opts: ReadOptions,
	limits: ReadLimits
): AsyncGenerator<RowEvent> {
	const { head, all } = await peekBytes(byteChunks(input)[Symbol.asyncIterator](), 4096);
	const detected = detectEncoding(head, opts.encoding);
	if (head.length === 0 || head.length === detected.bomLength) {
		yield { kind: 'source', encoding: detected.encoding, sheet: null };
		yield { kind: 'finding', finding: fileFinding('empty-file', 'The file is empty.', { rule: 'not-empty' }) };
		return;
	}
	const binary = sniffBinary(head, detected.encoding);
	if (binary) {
		yield { kind: 'source', encoding: detected.encoding, sheet: null };
		yield { kind: 'finding', finding: binaryFinding(binary, 'csv') };
		return;
	}

	const decoder = new SniffingDecoder(opts.encoding);
	async function* text() {
		for await (const chunk of all) {
			const s = decoder.push(chunk);
			if (s) yield s;
		}
		const s = decoder.end();
		if (s) yield s;
	}
	const parser = parse({
		relax_column_count: true,
		max_record_size: limits.maxRowChars,
		info: true,
		skip_empty_lines: false,
		bom: false,
		// A broken record is reported through 'skip' (and the rows before it still arrive) instead of
		// destroying the stream and the rows buffered ahead of the error. We stop at the first one.
		skip_records_with_error: true
	});
	const broken: { error: (CsvError & { lines?: number; records?: number }) | null } = { error: null };
	parser.on('skip', (err: CsvError) => {
		broken.error ??= err;
	});
	const source = Readable.from(text(), { objectMode: false });
	pipeline(source, parser, () => {
		/* errors surface through the iteration below */
	});

	let header: string[] | null = null;
	let lastRow = 0;
	let sourceSent = false;
	let fallbackReported = false;
	let dataRows = 0;
	const announce = function* (): Generator<RowEvent> {
		if (!sourceSent) {
			sourceSent = true;
			yield { kind: 'source', encoding: decoder.label, sheet: null };
		}
		if (decoder.fellBack && !fallbackReported) {
			fallbackReported = true;
			yield { kind: 'finding', finding: windows1252Finding() };
		}
	};

	try {
		for await (const { record, info } of parser as AsyncIterable<{ record: string[]; info: { records: number; lines: number } }>) {
			const rowNo = info.records;
			if (broken.error && rowNo > (broken.error.records ?? 0)) break;
			lastRow = rowNo;
			yield* announce();
			const blank = record.every((c) => c.trim() === '');
			if (!header) {
				if (blank) continue;
				if (record.length === 1 && /[;\t|]/.test(record[0])) {
					const sep = record[0].includes(';') ? 'semicolons' : record[0].includes('\t') ? 'tabs' : 'vertical bars';
					yield {
						kind: 'finding',
						finding: fileFinding(
							'csv-wrong-delimiter',
							`The header row is separated by ${sep}, not commas. Save the file as "CSV (comma delimited)" and send it again.`,
							{ rule: 'delimiter', expected: ',' }
						)
					};
					return;
				}
				if (record.length > limits.maxColumns) {
					yield {
						kind: 'finding',
						finding: fileFinding('too-many-columns', `The header has ${record.length} columns; the limit is ${limits.maxColumns}.`, {
							rule: 'max-columns',
							max: limits.maxColumns
						})
					};
					return;
				}
				header = record;
				yield { kind: 'header', columns: record, row: rowNo };
				continue;
			}
			if (blank) continue;
			dataRows++;
			const values: Record<string, unknown> = {};
			const findings = [];
			const n = Math.min(record.length, header.length);
			for (let i = 0; i < n; i++) {
				const cell = record[i];
				if (cell.length > limits.maxCellChars) {
					findings.push(
						rowFinding(
							rowNo,
							'cell-too-large',
							`This cell holds ${cell.length} characters; the limit is ${limits.maxCellChars}. It was not read.`,
							{
								column: header[i].trim(),
								columnNumber: i + 1,
								cell: cellRef(i + 1, rowNo),
								rule: { rule: 'max-cell-size', max: limits.maxCellChars }
							}
						)
					);
					continue;
				}
				if (!Object.hasOwn(values, header[i])) values[header[i]] = cell;
			}
			if (record.length > header.length) {
				const extra = record.slice(header.length).findIndex((c) => c.trim() !== '');
				if (extra >= 0) {
					const col = header.length + extra + 1;
					findings.push(
						rowFinding(
							rowNo,
							'ragged-row',
							`This row has ${record.length} cells but the header has ${header.length}; cell ${cellRef(col, rowNo)} has no column. A comma inside an unquoted value may have split it.`,
							{ columnNumber: col, cell: cellRef(col, rowNo), rule: { rule: 'cell-count', expected: header.length, found: record.length } }
						)
					);
				}
			} else if (record.length < header.length) {
				findings.push(
					rowFinding(
						rowNo,
						'ragged-row',
						`This row has ${record.length} cells but the header has ${header.length}; the missing cells at the end are read as empty.`,
						{ severity: 'warning', rule: { rule: 'cell-count', expected: header.length, found: record.length } }
					)
				);
			}
			yield findings.length > 0 ? { kind: 'row', row: rowNo, values, findings } : { kind: 'row', row: rowNo, values };
		}
		const fatalSeen = broken.error;
		if (fatalSeen) {
			const fatal = FATAL[fatalSeen.code];
			const line = fatalSeen.lines ?? lastRow + 1;
			const rule = { rule: 'csv', line, row: (fatalSeen.records ?? lastRow) + 1 };
			yield* announce();
			yield {
				kind: 'finding',
				finding: fatal
					? fileFinding(fatal.code, fatal.message(line), rule)
					: fileFinding('csv-unreadable', `The file could not be read as CSV at line ${line}: ${fatalSeen.message}`, rule)
			};
			return;
		}
	} finally {
		parser.destroy();
		source.destroy();
	}
	yield* announce();
	if (!header)
		yield { kind: 'finding', finding: fileFinding('empty-file', 'The file has no header row and no data.', { rule: 'not-empty' }) };
	else if (dataRows === 0)
		yield {
			kind: 'finding',
			finding: fileFinding('no-rows', 'The file has a header row but no data rows.', { rule: 'has-rows' }, 'warning')
		};
}
