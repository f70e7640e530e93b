// One entry point for every upload format: `readRows` streams a file as RowEvents (see row-events.ts)
// and never holds the whole file in memory. Bad content never throws: it becomes a finding. Only a
// failure of the input stream itself (a client that hangs up) is thrown.
import { readCsv } from './read-csv';
import { readJson, readNdjson } from './read-json';
import { readXlsx } from './read-xlsx';
import { defaultLimits, type ReadOptions, type RowEvent, type RowFormat } from './row-events';
import type { TextEncodingName } from './decode';

export type { ReadLimits, ReadOptions, RowEvent, RowFormat } from './row-events';
export { defaultLimits } from './row-events';

export const XLSX_MEDIA_TYPE = 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet';

/** Media types each format is accepted as (the first is the canonical one). */
export const FORMAT_MEDIA_TYPES: Record<RowFormat, readonly string[]> = {
	csv: ['text/csv', 'application/csv', 'text/comma-separated-values'],
	xlsx: [XLSX_MEDIA_TYPE],
	ndjson: ['application/x-ndjson', 'application/ndjson', 'application/jsonl', 'application/x-jsonlines'],
	json: ['application/json']
};

const EXTENSIONS: Record<string, RowFormat> = { csv: 'csv', xlsx: 'xlsx', ndjson: 'ndjson', jsonl: 'ndjson', json: 'json' };

/**
 * The format of an upload from its Content-Type, or — when the type is missing or generic
 * (`application/octet-stream`, `text/plain`) — from the file name's extension. Null: not supported.
 */
export function detectFormat(contentType: string | null | undefined, fileName?: string | null): RowFormat | null {
	const type = (contentType ?? '').split(';')[0].trim().toLowerCase();
	for (const [format, types] of Object.entries(FORMAT_MEDIA_TYPES) as Array<[RowFormat, readonly string[]]>) {
		if (types.includes(type)) return format;
	}
	if (type === '' || type === 'application/octet-stream' || type === 'text/plain' || type === 'binary/octet-stream') {
		const ext = (fileName ?? '').toLowerCase().match(/\.([a-z]+)$/)?.[1];
		if (ext && EXTENSIONS[ext]) return EXTENSIONS[ext];
	}
	return null;
}

/** The charset a Content-Type declares, when it is one the readers know. */
export function declaredCharset(contentType: string | null | undefined): TextEncodingName | undefined {
	const m = /;\s*charset\s*=\s*"?([A-Za-z0-9_-]+)"?/i.exec(contentType ?? '');
	if (!m) return undefined;
	const c = m[1].toLowerCase();
	if (c === 'utf-8' || c === 'utf8') return 'utf-8';
	if (c === 'windows-1252' || c === 'cp1252' || c === 'iso-8859-1' || c === 'latin1' || c === 'us-ascii')
		return c === 'us-ascii' ? 'utf-8' : 'windows-1252';
	if (c === 'utf-16le') return 'utf-16le';
	if (c === 'utf-16be') return 'utf-16be';
	return undefined;
}

export function readRows(
	input: NodeJS.ReadableStream | AsyncIterable<Uint8Array>,
	format: RowFormat,
	opts: ReadOptions = {}
): AsyncGenerator<RowEvent> {
	const limits = { ...defaultLimits(), ...opts.limits };
	switch (format) {
		case 'csv':
			return readCsv(input, opts, limits);
		case 'xlsx':
			return readXlsx(input, opts, limits);
		case 'ndjson':
			return readNdjson(input, opts, limits);
		case 'json':
			return readJson(input, opts, limits);
	}
}
