// Demo rows as CSV with the full schema v1 header (every column, in the published order).
import { stringify } from 'csv-stringify/sync';
import { PRACTICE_RECORD_COLUMNS } from '../../src/lib/schema/practice-record';
import type { DemoRow } from './records';

export function toCsv(rows: DemoRow[]): string {
	return stringify(
		rows.map((r) => PRACTICE_RECORD_COLUMNS.map((c) => r[c] ?? '')),
		{ header: true, columns: [...PRACTICE_RECORD_COLUMNS] }
	);
}
