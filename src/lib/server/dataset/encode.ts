// Dataset rows as CSV or NDJSON text for release files (the live CSV is PostgreSQL's COPY of the same rows;
// tests/api/dataset-sql-rows.test.ts holds the two byte-equal).
import { stringify } from 'csv-stringify/sync';
import { DATASET_COLUMNS, type DatasetRow } from '../../domain/anonymise';

export const CSV_TYPE = 'text/csv; charset=utf-8';
export const NDJSON_TYPE = 'application/x-ndjson';

export function csvHeader(): string {
	return stringify([DATASET_COLUMNS as unknown as string[]]);
}

/** Rows as CSV lines (RFC 4180, csv-stringify; null → empty field). */
export function csvLines(rows: DatasetRow[]): string {
	return stringify(rows.map((r) => DATASET_COLUMNS.map((c) => r[c] ?? '')));
}

export function ndjsonLines(rows: DatasetRow[]): string {
	let out = '';
	for (const r of rows) out += JSON.stringify(r) + '\n';
	return out;
}
