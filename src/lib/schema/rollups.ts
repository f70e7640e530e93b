// GET /api/v1/rollups: the query it takes and the answer it gives. Shared by the server (validation),
// the dashboard and CLI (types) and the OpenAPI generator (`registerRollupsOpenApi`).
import { z } from 'zod';
import { FyRangeError, parseFyRange } from '$lib/domain/fiscal-year';

/** Dimensions a grouping may name. Every grouping is per fiscal year: `fy` is added when left out. */
export const ROLLUP_DIMENSIONS = ['district', 'county', 'huc8', 'practice', 'fy'] as const;
export type RollupDimension = (typeof ROLLUP_DIMENSIONS)[number];

export const COUNT_BASES = ['in_service', 'installed'] as const;
export const FY_BASES = ['state', 'federal'] as const;
export const ROLLUP_FORMATS = ['json', 'csv', 'xlsx'] as const;

/** The grouping asked when none is given. */
export const DEFAULT_GROUPING = 'county,fy,practice';
/** How many fiscal years the default range covers, ending with the current one. */
export const DEFAULT_FY_SPAN = 8;

/** Canonical order of dimensions in a grouping and in table columns. */
const ORDER: Record<RollupDimension, number> = { fy: 0, district: 1, county: 2, huc8: 3, practice: 4 };

export interface Grouping {
	/** Dimensions in canonical order, always with `fy`. */
	dims: RollupDimension[];
	/** The grouping as asked, normalised (e.g. `county,fy,practice`). */
	name: string;
}

/** Parses one grouping such as `county,fy,practice`; throws Error with a message a person can act on. */
export function parseGrouping(text: string): Grouping {
	const parts = text
		.split(',')
		.map((s) => s.trim().toLowerCase())
		.filter((s) => s !== '');
	if (parts.length === 0) throw new Error('A grouping names at least one dimension, e.g. county,fy,practice.');
	const dims = new Set<RollupDimension>();
	for (const p of parts) {
		if (!(ROLLUP_DIMENSIONS as readonly string[]).includes(p)) {
			throw new Error(`Unknown dimension "${p}"; use ${ROLLUP_DIMENSIONS.join(', ')}.`);
		}
		if (dims.has(p as RollupDimension)) throw new Error(`Dimension "${p}" is named twice in "${text}".`);
		dims.add(p as RollupDimension);
	}
	if (dims.has('county') && dims.has('huc8')) {
		throw new Error('A grouping is by county or by HUC-8 watershed, not both (they are different geographies).');
	}
	const name = [...dims].join(',');
	dims.add('fy');
	return { dims: [...dims].sort((a, b) => ORDER[a] - ORDER[b]), name };
}

/** All groupings of a request: repeated `group` parameters and/or alternatives separated by `|`. */
export function parseGroupings(values: readonly string[]): Grouping[] {
	const texts = values.flatMap((v) => v.split('|')).filter((v) => v.trim() !== '');
	const out: Grouping[] = [];
	for (const t of texts.length ? texts : [DEFAULT_GROUPING]) {
		const g = parseGrouping(t);
		if (!out.some((o) => o.dims.join() === g.dims.join())) out.push(g);
	}
	if (out.length > 6) throw new Error('Ask for at most 6 groupings at once.');
	return out;
}

const fyRange = z.string().transform((s, ctx) => {
	try {
		return parseFyRange(s);
	} catch (e) {
		ctx.addIssue({
			code: 'custom',
			message: e instanceof FyRangeError ? e.message : 'Write a fiscal year as 2027 or a range as 2020..2027.'
		});
		return z.NEVER;
	}
});

/** The query string as the API reads it (every value a string, `group` possibly repeated). */
export const RollupQueryInput = z
	.object({
		group: z
			.array(z.string())
			.default([])
			.meta({
				description:
					'One or more groupings, separated by `|` or given as repeated parameters. A grouping is a comma list of ' +
					'`district`, `county` or `huc8`, `practice`, `fy`; every grouping is per fiscal year. Default `county,fy,practice`.'
			}),
		fy: fyRange.optional().meta({ description: 'A fiscal year (`2027`) or an inclusive range (`2020..2027`). Default: the last 8 FYs.' }),
		basis: z.enum(COUNT_BASES).default('in_service').meta({
			description: '`in_service`: practices inside their lifespan during the FY; `installed`: practices put in during the FY.'
		}),
		fy_basis: z
			.enum(FY_BASES)
			.default('state')
			.meta({ description: '`state` (start month from settings, default July) or `federal` (October–September, 31 U.S.C. §1102).' }),
		method: z
			.string()
			.regex(/^[a-z0-9][a-z0-9.-]{0,39}$/, 'A method version is lowercase letters, digits, dots and dashes.')
			.optional()
			.meta({ description: 'Reduction method version; default the active one.' }),
		district: z
			.string()
			.regex(/^([0-9]{1,9}|[A-Za-z][A-Za-z0-9_-]{0,31})$/, 'A district is its code (e.g. BLH) or numeric id.')
			.optional()
			.meta({ description: 'District code or id. A district account always sees its own district only.' }),
		county: z
			.string()
			.regex(/^[0-9]{5}$/, 'A county is its 5-digit FIPS code, e.g. 19109.')
			.optional()
			.meta({ description: 'County FIPS code (5 digits).' }),
		practice: z
			.string()
			.regex(/^[0-9]{3}$/, 'A practice is its 3-digit standard number, e.g. 605.')
			.optional()
			.meta({ description: 'Practice standard number.' }),
		format: z
			.enum(ROLLUP_FORMATS)
			.default('json')
			.meta({ description: 'json (default), csv (one grouping) or xlsx (a sheet per grouping).' })
	})
	.strict();
export type RollupQueryInput = z.input<typeof RollupQueryInput>;

export interface RollupQuery {
	groupings: Grouping[];
	fy: { from: number; to: number } | null;
	basis: (typeof COUNT_BASES)[number];
	fy_basis: (typeof FY_BASES)[number];
	method: string | null;
	district: string | null;
	county: string | null;
	practice: string | null;
	format: (typeof ROLLUP_FORMATS)[number];
}

export interface QueryProblem {
	pointer: string;
	detail: string;
}

/** Reads and checks URL query parameters; returns the query or the list of problems (pointer `#/query/<name>`). */
export function parseRollupQuery(params: URLSearchParams): { ok: true; query: RollupQuery } | { ok: false; errors: QueryProblem[] } {
	const raw: Record<string, unknown> = {};
	const errors: QueryProblem[] = [];
	for (const key of new Set(params.keys())) {
		const all = params.getAll(key);
		if (key === 'group') raw.group = all;
		else if (all.length > 1) errors.push({ pointer: `#/query/${key}`, detail: `Give ${key} once.` });
		else raw[key] = all[0];
	}
	const parsed = RollupQueryInput.safeParse(raw);
	if (!parsed.success) {
		for (const issue of parsed.error.issues) {
			const name = issue.path[0] === undefined ? '' : String(issue.path[0]);
			const detail =
				issue.code === 'unrecognized_keys'
					? `Unknown parameter${issue.keys.length > 1 ? 's' : ''} ${issue.keys.join(', ')}.`
					: name === 'basis' || name === 'fy_basis' || name === 'format'
						? `Use one of ${(name === 'basis' ? COUNT_BASES : name === 'fy_basis' ? FY_BASES : ROLLUP_FORMATS).join(', ')}.`
						: issue.message;
			errors.push({ pointer: issue.code === 'unrecognized_keys' ? '#/query' : `#/query/${name}`, detail });
		}
	}
	let groupings: Grouping[] = [];
	try {
		groupings = parseGroupings((raw.group as string[] | undefined) ?? []);
	} catch (e) {
		errors.push({ pointer: '#/query/group', detail: (e as Error).message });
	}
	if (errors.length > 0 || !parsed.success) return { ok: false, errors };
	const q = parsed.data;
	if (q.format === 'csv' && groupings.length > 1) {
		return {
			ok: false,
			errors: [{ pointer: '#/query/group', detail: 'CSV holds one grouping; ask for one, or use format=xlsx (a sheet per grouping).' }]
		};
	}
	if (q.county && groupings.some((g) => g.dims.includes('huc8'))) {
		return {
			ok: false,
			errors: [
				{ pointer: '#/query/county', detail: 'Watershed (huc8) groupings cannot be filtered by county: a HUC-8 crosses county lines.' }
			]
		};
	}
	return {
		ok: true,
		query: {
			groupings,
			fy: q.fy ?? null,
			basis: q.basis,
			fy_basis: q.fy_basis,
			method: q.method ?? null,
			district: q.district ?? null,
			county: q.county ?? null,
			practice: q.practice ?? null,
			format: q.format
		}
	};
}

// --- the answer --------------------------------------------------------------------------------------

const lb = (what: string) => z.number().meta({ description: `${what}, lb per year, rounded to 0.1` });

/** Measures of a cell or a totals row. */
export const RollupMeasures = z.object({
	practices: z.number().int().meta({ description: 'Practice records counted' }),
	operations: z.number().int().nullable().meta({
		description: 'Distinct operations (farms); records without an operation id count as one per district. Null where not published.'
	}),
	credited_acres: z.number().meta({ description: 'Credited acres (acres treated, or drainage area for edge-of-field practices), 0.01 ac' }),
	cost_usd: z.number().meta({ description: 'Total cost reported, dollars (cents)' }),
	cost_share_usd: z.number().meta({ description: 'Cost-share paid, dollars (cents)' }),
	n_lb_yr_mean: lb('Nitrogen reduction, mean'),
	n_lb_yr_low: lb('Nitrogen reduction, low'),
	n_lb_yr_high: lb('Nitrogen reduction, high'),
	p_lb_yr_mean: lb('Phosphorus reduction, mean'),
	p_lb_yr_low: lb('Phosphorus reduction, low'),
	p_lb_yr_high: lb('Phosphorus reduction, high'),
	usd_per_lb_n: z
		.number()
		.nullable()
		.meta({ description: 'Total cost ÷ mean N reduction (dollars per lb N per year, not annualised); null when no N is credited' })
});

export const RollupCell = RollupMeasures.extend({
	fy: z.number().int(),
	district_id: z.number().int().optional(),
	district_code: z.string().optional(),
	district_name: z.string().optional(),
	county_fips: z.string().nullable().optional().meta({ description: 'Null in a researcher row generalised to a region or the state' }),
	county_name: z.string().nullable().optional(),
	huc8: z.string().nullable().optional().meta({ description: 'HUC-8 (first 8 digits of the HUC-12); null when no HUC-12 was reported' }),
	practice_code: z.string().optional(),
	practice_name: z.string().optional(),
	area_level: z
		.enum(['county', 'region', 'state'])
		.optional()
		.meta({ description: 'Researcher answers: the level a county row is published at after the small-cell rule' }),
	area_name: z.string().optional()
}).meta({ id: 'RollupCell' });
export type RollupCell = z.infer<typeof RollupCell>;

export const RollupTotal = RollupMeasures.extend({ fy: z.number().int() }).meta({ id: 'RollupTotal' });
export type RollupTotal = z.infer<typeof RollupTotal>;

export const RollupGroupingResult = z.object({
	group: z.array(z.enum(ROLLUP_DIMENSIONS)),
	cells: z.array(RollupCell),
	totals: z.array(RollupTotal).meta({ description: 'One totals row per fiscal year: the sum of the cells of that FY' })
});
export type RollupGroupingResult = z.infer<typeof RollupGroupingResult>;

export const SmallCellReport = z
	.object({
		k: z.number().int(),
		cells: z.number().int().meta({ description: 'County × FY × practice cells considered' }),
		published_as_county: z.number().int(),
		generalised_to_region: z.number().int(),
		generalised_to_state: z.number().int(),
		suppressed: z.number().int()
	})
	.meta({ id: 'RollupSmallCells', description: 'Researcher answers: what the small-cell rule generalised or suppressed' });

export const RollupResponse = z
	.object({
		method_version: z.string(),
		fy_basis: z.enum(FY_BASES),
		state_fy_start_month: z.number().int(),
		basis: z.enum(COUNT_BASES),
		fy: z.object({ from: z.number().int(), to: z.number().int() }),
		filters: z.object({
			district: z.string().nullable(),
			county: z.string().nullable(),
			practice: z.string().nullable()
		}),
		refreshed_at: z
			.string()
			.nullable()
			.meta({ description: 'When this method’s summary was last rebuilt in full (later changes are applied incrementally)' }),
		groupings: z.array(RollupGroupingResult),
		small_cells: SmallCellReport.nullable(),
		notes: z.array(z.string())
	})
	.meta({ id: 'RollupResponse' });
export type RollupResponse = z.infer<typeof RollupResponse>;

/** 202: the summary for this method version is being built; ask again after `Retry-After` seconds. */
export const RollupPending = z
	.object({
		status: z.enum(['pending', 'running']),
		method_version: z.string(),
		phase: z.string().nullable(),
		done: z.number().int(),
		total: z.number().int(),
		detail: z.string()
	})
	.meta({ id: 'RollupPending' });
export type RollupPending = z.infer<typeof RollupPending>;

/** The query parameters as OpenAPI sees them (all strings in the URL). */
export const RollupQueryParams = z.object({
	group: z
		.string()
		.optional()
		.meta({ description: RollupQueryInput.shape.group.meta()?.description as string, example: 'county,fy,practice|huc8' }),
	fy: z.string().optional().meta({ example: '2020..2027' }),
	basis: z.enum(COUNT_BASES).optional(),
	fy_basis: z.enum(FY_BASES).optional(),
	method: z.string().optional(),
	district: z.string().optional(),
	county: z.string().optional(),
	practice: z.string().optional(),
	format: z.enum(ROLLUP_FORMATS).optional()
});

/** Minimal shape of zod-to-openapi's registry, so this file needs no import of it. */
interface RegistryLike {
	registerPath(route: Record<string, unknown>): void;
}

/**
 * Registers GET /api/v1/rollups with the OpenAPI registry (src/lib/schema/openapi.ts, once it exists:
 * call `registerRollupsOpenApi(registry)` there).
 */
export function registerRollupsOpenApi(registry: RegistryLike, problemSchema?: z.ZodType): void {
	const problem = problemSchema ?? z.object({ type: z.string(), status: z.number(), title: z.string(), detail: z.string().optional() });
	registry.registerPath({
		method: 'get',
		path: '/api/v1/rollups',
		summary: 'Totals by county, HUC-8 or district × fiscal year × practice',
		description:
			'Practices, distinct operations, credited acres, dollars and estimated N and P reductions per cell, from summaries ' +
			'maintained as records change. Scope `rollups:read`. District accounts see their own district; researchers get ' +
			'county × FY × practice cells with the small-cell rule applied.',
		tags: ['rollups'],
		security: [{ bearer: [] }],
		request: { query: RollupQueryParams },
		responses: {
			200: {
				description: 'The rollup (JSON), or a CSV / XLSX download',
				content: {
					'application/json': { schema: RollupResponse },
					'text/csv': { schema: z.string() },
					'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet': { schema: z.string().meta({ format: 'binary' }) }
				}
			},
			202: {
				description: 'The summary for this method version is being built; retry after Retry-After seconds',
				content: { 'application/json': { schema: RollupPending } }
			},
			400: { description: 'Bad query', content: { 'application/problem+json': { schema: problem } } },
			401: { description: 'No or bad token', content: { 'application/problem+json': { schema: problem } } },
			403: { description: 'Missing scope or another district', content: { 'application/problem+json': { schema: problem } } },
			404: { description: 'Unknown method version or district', content: { 'application/problem+json': { schema: problem } } }
		}
	});
}
