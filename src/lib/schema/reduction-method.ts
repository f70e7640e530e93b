// The reduction-method document (a versioned, cited efficiency table) as the API accepts and returns it.
// One schema for the server (validation of POST /api/v1/methods), the admin form and the OpenAPI document.
// Shape here; cross-field rules (catalog codes, duplicates, ranges) from the domain's `methodProblems`.
import { z } from 'zod';
import { methodProblems, METHOD_VERSION_RE, type ReductionMethod } from '../domain/reduction-method';

const fraction = z.number().min(0).max(1);

export const CitationSchema = z.strictObject({
	title: z.string().trim().min(1).max(400),
	publisher: z.string().trim().min(1).max(400),
	year: z.number().int().min(1800).max(2200).nullable(),
	section: z.string().trim().max(400).nullable(),
	recalled: z.boolean(),
	note: z.string().max(2000).optional()
});

export const EfficiencyValueSchema = z.strictObject({
	mean: fraction,
	sd: fraction.nullable(),
	applies_to: z.enum(['load', 'concentration']),
	citation: CitationSchema
});

export const PracticeMethodSchema = z.strictObject({
	practice_code: z.string().regex(/^\d{3}$/, 'a three-digit practice standard number'),
	source_practice: z.string().trim().min(1).max(200),
	n: EfficiencyValueSchema.nullable(),
	p: EfficiencyValueSchema.nullable(),
	credited_basis: z.enum(['extent_acres', 'drainage_area_acres']),
	lifespan_years: z.number().int().min(1).max(100),
	lifespan_citation: CitationSchema,
	note: z.string().max(2000)
});

const lbPerAc = z.number().min(0).max(1000);

export const BaselineLossSchema = z.strictObject({
	n_lb_per_ac_yr: lbPerAc,
	p_lb_per_ac_yr: lbPerAc,
	citation: CitationSchema
});

export const CountyBaselineSchema = BaselineLossSchema.extend({ county_fips: z.string().regex(/^\d{5}$/, 'a 5-digit county FIPS code') });

export const BioreactorParametersSchema = z.strictObject({
	min_retention_hours: z.number().gt(0).max(240),
	min_retention_citation: CitationSchema,
	design_share_of_peak: z.number().gt(0).max(1),
	design_share_citation: CitationSchema,
	default_porosity: z.number().gt(0).max(1),
	porosity_citation: CitationSchema
});

export const ReductionMethodSchema = z
	.strictObject({
		version: z.string().regex(METHOD_VERSION_RE, '1–40 lowercase letters, digits, dots or dashes, e.g. ia-2017.2'),
		label: z.string().trim().min(1).max(200),
		description: z.string().max(4000),
		practices: z.array(PracticeMethodSchema).min(1).max(500),
		baseline: z.strictObject({ statewide: BaselineLossSchema, counties: z.array(CountyBaselineSchema).max(5000) }),
		bioreactor: BioreactorParametersSchema,
		notes: z.array(z.string().max(2000)).max(100)
	})
	.superRefine((m, ctx) => {
		for (const p of methodProblems(m as ReductionMethod)) {
			ctx.addIssue({
				code: 'custom',
				message: p.detail,
				path: p.path
					.split('/')
					.filter(Boolean)
					.map((s) => (/^\d+$/.test(s) ? Number(s) : s))
			});
		}
	});

// The schema's output is exactly the domain type (compile-time check both ways).
type SchemaOut = z.infer<typeof ReductionMethodSchema>;
const _toDomain = (x: SchemaOut): ReductionMethod => x;
const _fromDomain = (x: ReductionMethod): SchemaOut => x;
void _toDomain;
void _fromDomain;

/** PUT /api/v1/settings/active-method */
export const ActiveMethodBody = z.strictObject({ version: z.string().regex(METHOD_VERSION_RE, 'a method version such as ia-2017.1') });

/** A stored method as the API lists it. */
export const StoredMethodSummary = z.object({
	version: z.string(),
	label: z.string(),
	active: z.boolean(),
	created_by: z.string(),
	created_at: z.string()
});
export type StoredMethodSummary = z.infer<typeof StoredMethodSummary>;
