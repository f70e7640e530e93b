// Practice records as the API answers them (list rows, one record with its versions).
import { z } from 'zod';
import { Finding } from './findings';

export const RecordSummary = z.object({
	id: z.string(),
	district: z.object({ code: z.string(), name: z.string() }),
	local_id: z.string(),
	version: z.number().int(),
	status: z.enum(['installed', 'withdrawn']),
	practice_code: z.string(),
	county_fips: z.string(),
	installed_on: z.string(),
	withdrawn_on: z.string().nullable(),
	fiscal_year: z.number().int().describe('State fiscal year of installed_on (named for the year it ends).'),
	extent_acres: z.number().nullable(),
	drainage_area_acres: z.number().nullable(),
	field_id: z.string().nullable(),
	operation_id: z.string().nullable(),
	huc12: z.string().nullable(),
	cost_total_usd: z.number().nullable(),
	cost_share_usd: z.number().nullable(),
	funding_program: z.string().nullable(),
	warnings: z.number().int().describe('Warnings the current version carries.'),
	updated_at: z.string(),
	links: z.object({ self: z.string() })
});
export type RecordSummary = z.infer<typeof RecordSummary>;

export const RecordPage = z.object({ data: z.array(RecordSummary), next: z.string().nullable() });

export const RecordVersionView = z.object({
	version: z.number().int(),
	created_at: z.string(),
	actor: z.string(),
	batch: z.object({ id: z.string(), file_name: z.string().nullable(), mode: z.string() }).nullable(),
	changed_fields: z.array(z.string()),
	changes: z.array(z.object({ field: z.string(), before: z.unknown(), after: z.unknown() })),
	data: z.record(z.string(), z.unknown())
});
export type RecordVersionView = z.infer<typeof RecordVersionView>;

export const RecordDetail = RecordSummary.extend({
	data: z.record(z.string(), z.unknown()).describe('Every field of the current version, as sent.'),
	current_findings: z.array(Finding.pick({ code: true, severity: true, column: true, value: true, rule: true, message: true })),
	versions: z.array(RecordVersionView).describe('Newest first.')
});
export type RecordDetail = z.infer<typeof RecordDetail>;

export const RecordWriteResult = z.object({
	outcome: z.enum(['created', 'updated', 'unchanged', 'withdrawn']),
	record: RecordDetail,
	findings: z.array(Finding)
});
