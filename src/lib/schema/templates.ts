// The CSV template: the header row of schema v1 in template order. Pure.
import { PRACTICE_RECORD_COLUMNS, SCHEMA_VERSION } from './practice-record';

export const CSV_TEMPLATE_FILE_NAME = `runnel-practice-records-v${SCHEMA_VERSION}.csv`;
export const XLSX_TEMPLATE_FILE_NAME = `runnel-practice-records-v${SCHEMA_VERSION}.xlsx`;

/** The CSV template: one header line (CRLF, as RFC 4180 writes line ends). */
export function csvTemplate(): string {
	return `${PRACTICE_RECORD_COLUMNS.join(',')}\r\n`;
}
