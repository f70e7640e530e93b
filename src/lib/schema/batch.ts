// The batch resource and its findings list, as the API answers them (shared by server, browser, CLI
// and the OpenAPI document).
import { z } from 'zod';
import { Finding } from './findings';

export const BATCH_MODES = ['check', 'all', 'valid'] as const;
export const BatchMode = z.enum(BATCH_MODES);
export type BatchMode = z.infer<typeof BatchMode>;

/** What a batch carries: practice records (schema practice-record) or upkeep events (schema practice-event). */
export const BATCH_TYPES = ['records', 'events'] as const;
export const BatchType = z.enum(BATCH_TYPES);
export type BatchType = z.infer<typeof BatchType>;
export const BATCH_TYPE_LABELS: Record<BatchType, string> = {
	records: 'Practice records',
	events: 'Upkeep events (top-ups, structure settings, mowing, repairs, inspections)'
};

export const BATCH_STATUSES = ['received', 'checking', 'done', 'failed'] as const;
export const BatchStatus = z.enum(BATCH_STATUSES);
export type BatchStatus = z.infer<typeof BatchStatus>;

export const UPLOAD_FORMATS = ['csv', 'xlsx', 'ndjson', 'json'] as const;

export const BATCH_MODE_LABELS: Record<BatchMode, string> = {
	check: 'Check only (dry run, nothing is saved)',
	all: 'All or nothing (any error: nothing is saved)',
	valid: 'Save the valid rows, report the rest'
};

export const BatchCounts = z.object({
	rows: z.number().int().describe('Data rows read (the header not counted).'),
	accepted: z.number().int().describe('Rows saved (for `check`: rows that would be saved).'),
	rejected: z.number().int().describe('Rows not saved.'),
	errors: z.number().int().describe('Findings of severity `error`.'),
	warnings: z.number().int().describe('Findings of severity `warning`.'),
	created: z.number().int(),
	updated: z.number().int(),
	unchanged: z.number().int(),
	withdrawn: z.number().int()
});
export type BatchCounts = z.infer<typeof BatchCounts>;

export const Batch = z.object({
	id: z.string(),
	district: z.object({ code: z.string(), name: z.string() }),
	mode: BatchMode,
	type: BatchType.describe('What the file holds: `records` (practice records) or `events` (upkeep events).'),
	status: BatchStatus,
	valid: z.boolean().nullable().describe('True when no finding is an error; null until checked.'),
	committed: z.boolean().describe('True when the batch wrote to the records (never for `check`).'),
	file_name: z.string().nullable(),
	format: z.enum(UPLOAD_FORMATS),
	content_type: z.string(),
	sheet: z.string().nullable(),
	encoding: z.string().nullable(),
	size_bytes: z.number().int(),
	sha256: z.string(),
	schema_version: z
		.string()
		.describe('The version of the schema the file was checked against (practice-record or practice-event, by `type`).'),
	progress: z.object({ rows_done: z.number().int() }),
	counts: BatchCounts,
	findings_by_code: z.record(z.string(), z.number().int()),
	findings_by_column: z.record(z.string(), z.number().int()),
	findings_omitted: z.number().int().describe('Findings counted but not listed (the list is capped).'),
	failure: z.string().nullable(),
	actor: z.string(),
	created_at: z.string(),
	started_at: z.string().nullable(),
	finished_at: z.string().nullable(),
	links: z.object({ self: z.string(), findings: z.string(), findings_csv: z.string() })
});
export type Batch = z.infer<typeof Batch>;

export const BatchPage = z.object({ data: z.array(Batch), next: z.string().nullable() });

export const BatchFinding = Finding.extend({ seq: z.number().int() });
export type BatchFinding = z.infer<typeof BatchFinding>;
export const BatchFindingPage = z.object({ data: z.array(BatchFinding), next: z.string().nullable() });

export const XLSX_CONTENT_TYPE = 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet';

/** The Content-Type to send a file with, from its name (browsers guess CSV types inconsistently). */
export function contentTypeForFileName(name: string): string | null {
	const ext = /\.([A-Za-z0-9]+)$/.exec(name)?.[1]?.toLowerCase();
	switch (ext) {
		case 'csv':
		case 'txt':
			return 'text/csv';
		case 'xlsx':
			return XLSX_CONTENT_TYPE;
		case 'ndjson':
		case 'jsonl':
			return 'application/x-ndjson';
		case 'json':
			return 'application/json';
		default:
			return null;
	}
}
