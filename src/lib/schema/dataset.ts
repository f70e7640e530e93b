// The research dataset: one published row, the live query, the release request, and the data dictionary
// (generated from the row schema's descriptions). Shared by the server, the release writer and the CLI.
import { z } from 'zod';
import { DATASET_COLUMNS } from '../domain/anonymise';

const desc = (s: z.ZodType, description: string, unit?: string) => s.meta({ description, ...(unit ? { 'x-unit': unit } : {}) });

export const DatasetRowSchema = z.object({
	pid: desc(
		z.string(),
		'Pseudonymous record id: HMAC-SHA-256 of the record id under a server secret (hex). Stable across releases; cannot be linked back without the secret.'
	),
	practice_code: desc(z.string(), 'National conservation practice standard number.'),
	practice_name: desc(z.string(), 'Practice name.'),
	area_level: desc(
		z.enum(['county', 'region', 'state']),
		'Finest location published for this row: county, or generalised to the region or the state by the small-cell rule.'
	),
	county_fips: desc(z.string().nullable(), 'Census county FIPS code (5 digits); empty when the row is generalised.'),
	region: desc(z.string().nullable(), "The district's region; set only when area_level = region."),
	state_fips: desc(z.string(), 'Census state FIPS code (2 digits).'),
	huc8: desc(z.string().nullable(), 'HUC-8 subbasin; empty when generalised or when a HUC-8 group of the cell is small.'),
	install_year: desc(z.number().int(), 'Calendar year of installation.'),
	install_month: desc(z.number().int().min(1).max(12), 'Month of installation (1–12); exact dates are never published.'),
	fy_installed: desc(
		z.number().int(),
		'State fiscal year of installation (named for the year it ends); the small-cell rule works on this FY.'
	),
	fy_in_service_first: desc(z.number().int().nullable(), 'First state fiscal year in service.'),
	fy_in_service_last: desc(z.number().int().nullable(), 'Last state fiscal year in service (lifespan or withdrawal).'),
	credited_acres: desc(z.number(), 'Credited acres, rounded: to the acre below 100 acres, to 5 acres from 100 acres up.', 'ac'),
	n_lb_mean: desc(z.number(), 'Estimated nitrogen reduction, mean, scaled to the rounded acres.', 'lb/yr'),
	n_lb_low: desc(z.number(), 'Estimated nitrogen reduction, low end of the published spread.', 'lb/yr'),
	n_lb_high: desc(z.number(), 'Estimated nitrogen reduction, high end of the published spread.', 'lb/yr'),
	p_lb_mean: desc(z.number(), 'Estimated phosphorus reduction, mean, scaled to the rounded acres.', 'lb/yr'),
	p_lb_low: desc(z.number(), 'Estimated phosphorus reduction, low end.', 'lb/yr'),
	p_lb_high: desc(z.number(), 'Estimated phosphorus reduction, high end.', 'lb/yr'),
	method_version: desc(z.string(), 'Reduction method version the estimates come from (see /methods).'),
	funding_category: desc(
		z.enum(['federal', 'state', 'local', 'private', 'multiple', 'other', 'not_reported']),
		"Category of the funding program(s) named by the district; the district's own wording is never published."
	)
});
export type DatasetRowOut = z.infer<typeof DatasetRowSchema>;

export interface DictionaryEntry {
	column: string;
	type: string;
	nullable: boolean;
	unit: string | null;
	description: string;
	values: string[] | null;
}

/** The data dictionary, in column order, from the schema above (one source of truth). */
export function dataDictionary(): DictionaryEntry[] {
	const json = z.toJSONSchema(DatasetRowSchema) as { properties: Record<string, Record<string, unknown>> };
	return DATASET_COLUMNS.map((column) => {
		const p = json.properties[column];
		const variants = (p.anyOf as Record<string, unknown>[] | undefined) ?? [p];
		const main = variants.find((v) => v.type !== 'null') ?? variants[0];
		const types = ([] as unknown[]).concat(main.type ?? 'string').map(String);
		return {
			column,
			type: types.filter((t) => t !== 'null')[0] ?? 'string',
			nullable: types.includes('null') || variants.some((v) => v.type === 'null'),
			unit: (p['x-unit'] as string | undefined) ?? null,
			description: String(p.description ?? ''),
			values: (main.enum as string[] | undefined) ?? null
		};
	});
}

export const DATASET_FORMATS = ['json', 'csv', 'ndjson'] as const;

export const DatasetQuery = z.object({
	fy: z
		.string()
		.regex(/^\d{4}(\.\.\d{4})?$/, 'a fiscal year like 2026, or a range like 2024..2026')
		.transform((v) => {
			const [from, to = from] = v.split('..').map(Number);
			return { from, to };
		})
		.refine((r) => r.from <= r.to, 'the range must not run backwards')
		.optional(),
	practice: z
		.string()
		.regex(/^[0-9A-Za-z-]{1,10}$/, 'a practice code')
		.optional(),
	county: z
		.string()
		.regex(/^\d{5}$/, 'a 5-digit county FIPS code')
		.optional(),
	format: z.enum(DATASET_FORMATS).optional(),
	limit: z.string().optional(),
	cursor: z.string().optional()
});

export const ReleaseVersion = z.string().regex(/^\d{4}\.[1-9]\d*$/, 'a version like 2027.1');

export const CreateRelease = z.object({
	version: ReleaseVersion,
	notes: z.string().max(5000).default('')
});

export const WithdrawRelease = z.object({
	reason: z.string().trim().min(5, 'say why, in a sentence').max(2000)
});

export const RELEASE_FORMATS = ['csv', 'ndjson', 'xlsx'] as const;
