// The shape of a finding: one result of checking an upload (product brief "finding"; report shape after
// the Frictionless Table Schema validation report). Shared by server, browser and CLI.
import { z } from 'zod';

export const FindingSeverity = z.enum(['error', 'warning']);
export type FindingSeverity = z.infer<typeof FindingSeverity>;

export const Finding = z.object({
	/** Stable slug, e.g. `required-missing`, `county-not-served`, `bioreactor-undersized`. */
	code: z.string(),
	severity: FindingSeverity,
	/**
	 * Where to find the row, 1-based; null for file-level findings. CSV/XLSX: the row number with the header
	 * counted (the first data row is 2; XLSX: the sheet's row number). NDJSON: the line number. JSON: the
	 * element's position in the array.
	 */
	row: z.number().int().nullable(),
	column: z.string().nullable(),
	/** 1-based column number in the file; null when not tied to a column. */
	column_number: z.number().int().nullable(),
	/** XLSX-style cell reference such as `B17`; null when not tied to a cell. */
	cell: z.string().nullable(),
	/** The offending value as sent (redacted for personal columns), or null. */
	value: z.string().nullable(),
	/** The rule that failed, e.g. `{ rule: 'enum', expected: [...] }`. */
	rule: z.record(z.string(), z.unknown()).nullable(),
	/** Plain language a district clerk understands. */
	message: z.string()
});
export type Finding = z.infer<typeof Finding>;
