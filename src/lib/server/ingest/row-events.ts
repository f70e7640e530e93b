// What the file readers yield, whatever the format. Shared by the server's batch pipeline and the CLI.
import type { Finding } from '../../schema/findings';
import type { TextEncodingName } from './decode';

export type RowFormat = 'csv' | 'xlsx' | 'ndjson' | 'json';

/**
 * - `source`: first event; the text encoding (for XLSX always utf-8, the format's own) and the sheet read.
 * - `header`: CSV/XLSX only — the header cells as sent (untrimmed). JSON/NDJSON have no header: their
 *   rows are keyed by property name.
 * - `row`: one data row. `row` is the number a person finds it by: CSV and XLSX — the 1-based row
 *   number with the header counted (the first data row under a header on row 1 is 2; XLSX uses the
 *   sheet's own row numbers); NDJSON — the 1-based line number; JSON — the 1-based position of the
 *   element in the array. `findings` are problems the reader met in this row (a ragged row, an
 *   oversized cell); the row still goes to the checker.
 * - `finding`: row null = a file-level finding (severity error: the file cannot be used as a whole;
 *   the reader stops after a fatal one). With a row number: a row that could not be read at all (a
 *   broken NDJSON line, a JSON element that is not an object) — count it as a rejected row.
 */
export type RowEvent =
	| { kind: 'source'; encoding: TextEncodingName; sheet: string | null }
	| { kind: 'header'; columns: string[]; row?: number }
	| { kind: 'row'; row: number; values: Record<string, unknown>; findings?: Finding[] }
	| { kind: 'finding'; finding: Finding };

export interface ReadLimits {
	/** Longest cell, in characters (a longer cell is dropped with a `cell-too-large` error). */
	maxCellChars: number;
	/** Longest row / NDJSON line / JSON element, in characters (CSV stops there: the rest cannot be trusted). */
	maxRowChars: number;
	/** Most columns in a header (or properties in a JSON object). */
	maxColumns: number;
	/** XLSX: most entries in the zip. */
	maxZipEntries: number;
	/** XLSX: most bytes once unzipped, all entries together. */
	maxUncompressedBytes: number;
}

const envNumber = (name: string, fallback: number) => {
	const v = Number(process.env[name]);
	return Number.isFinite(v) && v > 0 ? v : fallback;
};

/** Defaults; each can be set by environment variable (README lists them). */
export function defaultLimits(): ReadLimits {
	return {
		maxCellChars: envNumber('MAX_CELL_KB', 32) * 1024,
		maxRowChars: envNumber('MAX_ROW_KB', 1024) * 1024,
		maxColumns: envNumber('MAX_COLUMNS', 200),
		maxZipEntries: envNumber('MAX_ZIP_ENTRIES', 2000),
		maxUncompressedBytes: envNumber('MAX_XLSX_UNCOMPRESSED_MB', 1024) * 1024 * 1024
	};
}

export interface ReadOptions {
	/** XLSX: the sheet to read (default: the first sheet). */
	sheet?: string;
	/** Text formats: the charset the sender declared (a byte-order mark still wins). */
	encoding?: TextEncodingName;
	limits?: Partial<ReadLimits>;
}

export function fileFinding(
	code: string,
	message: string,
	rule: Record<string, unknown> | null = null,
	severity: Finding['severity'] = 'error'
): Finding {
	return { code, severity, row: null, column: null, column_number: null, cell: null, value: null, rule, message };
}

export function rowFinding(
	row: number,
	code: string,
	message: string,
	opts: {
		severity?: Finding['severity'];
		column?: string | null;
		columnNumber?: number | null;
		cell?: string | null;
		rule?: Record<string, unknown> | null;
	} = {}
): Finding {
	return {
		code,
		severity: opts.severity ?? 'error',
		row,
		column: opts.column ?? null,
		column_number: opts.columnNumber ?? null,
		cell: opts.cell ?? null,
		value: null,
		rule: opts.rule ?? null,
		message
	};
}

export function windows1252Finding(): Finding {
	return fileFinding(
		'encoding-windows-1252',
		'The file is not UTF-8 throughout. Characters that were not UTF-8 were read as Windows-1252 (what Excel saves as plain "CSV" on Windows). Check accented letters in the findings; saving as "CSV UTF-8" avoids this.',
		{ rule: 'encoding', expected: 'utf-8' },
		'warning'
	);
}

/** Reads up to `n` bytes from the front of a chunk stream; returns them and the whole stream again. */
export async function peekBytes(
	chunks: AsyncIterator<Uint8Array>,
	n: number
): Promise<{ head: Uint8Array; all: AsyncIterable<Uint8Array> }> {
	const held: Uint8Array[] = [];
	let size = 0;
	let done = false;
	while (size < n) {
		const r = await chunks.next();
		if (r.done) {
			done = true;
			break;
		}
		held.push(r.value);
		size += r.value.length;
	}
	const head = Buffer.concat(held.map((c) => Buffer.from(c.buffer, c.byteOffset, c.byteLength)));
	return {
		head,
		all: {
			async *[Symbol.asyncIterator]() {
				if (head.length > 0) yield head;
				if (done) return;
				while (true) {
					const r = await chunks.next();
					if (r.done) return;
					yield r.value;
				}
			}
		}
	};
}
