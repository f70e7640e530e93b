// Practice records as the API answers them (list rows, one record with its versions, its estimates and,
// for bioreactors, the design screening).
import { z } from 'zod';
import type { BioreactorScreening as ScreeningDomain } from '../domain/bioreactor-screening';
import type { RecordEstimate } from '../domain/estimate';
import { Finding } from './findings';
import { EVENT_KIND_VALUES } from './practice-event';

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

// --- estimates ---------------------------------------------------------------------------------------

export const LbRange = z.object({ mean: z.number(), low: z.number(), high: z.number() });
const FractionRange = z
	.object({ mean: z.number(), low: z.number(), high: z.number() })
	.describe('Fractions 0–1; low/high are mean ∓ one published SD, clipped to [0, 1].');
const NotCountedReason = z.enum(['withdrawn', 'not-in-service', 'practice-not-in-method', 'no-credited-acres']);

export const StoredEstimate = z.object({
	method_version: z.string(),
	active: z.boolean().describe('Whether this is the hub’s active reduction method.'),
	current: z
		.boolean()
		.describe('False when records changed after this method version was last computed (it is recomputed when next asked for).'),
	counted: z.boolean(),
	reason: z.string().nullable().describe('Why the record adds nothing (withdrawn, practice-not-in-method, …); null when counted.'),
	credited_acres: z.number().describe('Acres treated (in-field practices) or drainage area treated (edge-of-field).'),
	n_lb: LbRange.describe('Nitrogen kept out of the water, lb per year.'),
	p_lb: LbRange.describe('Phosphorus kept out of the water, lb per year.'),
	computed_at: z.string()
});
export type StoredEstimate = z.infer<typeof StoredEstimate>;

export const EstimateBreakdown = z.object({
	record_id: z.string(),
	method_version: z.string(),
	practice_code: z.string(),
	counted: z.boolean(),
	reason: NotCountedReason.nullable(),
	credited_basis: z.enum(['extent_acres', 'drainage_area_acres']).nullable(),
	credited_acres: z.number(),
	baseline: z.object({ n_lb_per_ac_yr: z.number(), p_lb_per_ac_yr: z.number(), source: z.enum(['county', 'statewide']) }),
	efficiency: z.object({ n: FractionRange, p: FractionRange }).describe('The practice’s own efficiency under the method.'),
	credited_efficiency: z
		.object({ n: FractionRange, p: FractionRange })
		.describe('The efficiency credited after stacking: its share of the field’s combined reduction.'),
	n_lb: LbRange,
	p_lb: LbRange,
	stacked_with: z.array(z.string()).describe('Ids of the other counted records on the same field.'),
	field_combined: z
		.object({ n: FractionRange, p: FractionRange })
		.nullable()
		.describe('The field’s combined efficiency 1 − Π(1 − eᵢ) when practices are stacked; null when alone.'),
	stacking_share: z
		.object({ n: z.number().nullable(), p: z.number().nullable() })
		.describe(
			'The share of the field’s combined reduction credited to this record (credited ÷ combined efficiency, means): 1 when the practice is alone; null when not counted or nothing is credited.'
		)
});
export type EstimateBreakdown = z.infer<typeof EstimateBreakdown>;

// --- bioreactor design screening ----------------------------------------------------------------------

const Quantity = z.object({
	value: z.number(),
	unit: z.string().describe('A unit expression unit libraries parse (ft^3/s, ft^3, hour, acre, inch/day, inch, ft), % or empty.'),
	label: z.string().describe('The symbol shown to people (cfs, ft³, h, ac, in/day, in, ft, %).')
});
const ScreeningColumn = z.enum([
	'practice_code',
	'drainage_area_acres',
	'drainage_coefficient_in_per_day',
	'bed_length_ft',
	'bed_width_ft',
	'bed_depth_ft',
	'main_diameter_in',
	'main_slope_pct',
	'media_porosity'
]);
const ScreeningAvailable = z.object({
	available: z.literal(true),
	method_version: z.string(),
	inputs: z.object({
		drainage_area: Quantity,
		drainage_coefficient: Quantity,
		bed_length: Quantity,
		bed_width: Quantity,
		bed_depth: Quantity,
		porosity: Quantity,
		porosity_is_default: z.boolean(),
		min_retention: Quantity,
		design_share_of_peak: Quantity
	}),
	peak_flow: Quantity.describe('Drainage coefficient × drained area (1 in/day over 1 ac = 0.042014 cfs).'),
	design_flow: Quantity.describe('The method’s design share of the peak flow.'),
	bed_volume: Quantity,
	pore_volume: Quantity,
	treatable_flow: Quantity.describe('Flow the bed treats while holding water the minimum retention time.'),
	treated_share_of_peak: Quantity,
	retention_at_design_flow: Quantity,
	required_pore_volume: Quantity,
	required_bed_volume: Quantity,
	main: z
		.object({
			diameter: Quantity,
			slope: Quantity,
			manning_n: z.number(),
			manning_n_basis: z.string(),
			capacity: Quantity.describe('Full-pipe capacity by Manning’s equation.'),
			capacity_share_of_peak: Quantity
		})
		.nullable(),
	warnings: z.array(
		z.object({
			code: z.enum(['bioreactor-treats-under-15pct', 'bioreactor-retention-short', 'main-capacity-below-peak']),
			column: ScreeningColumn.nullable(),
			message: z.string()
		})
	),
	caution: z.string()
});
const ScreeningUnavailable = z.object({
	available: z.literal(false),
	method_version: z.string(),
	missing: z.array(ScreeningColumn),
	invalid: z.array(z.object({ column: ScreeningColumn, message: z.string() })),
	caution: z.string()
});
export const BioreactorScreening = z
	.discriminatedUnion('available', [ScreeningAvailable, ScreeningUnavailable])
	.describe(
		'Screening estimates, not a design: design and installation follow the practice standard, local codes and a licensed engineer or approved designer.'
	);
export type BioreactorScreening = z.infer<typeof BioreactorScreening>;

// The API shapes above describe the domain's own types; these lines stop them drifting apart.
type Same<A, B> = [A] extends [B] ? ([B] extends [A] ? true : false) : false;
const sameScreening: Same<BioreactorScreening, ScreeningDomain> = true;
const sameEstimate: Same<Omit<EstimateBreakdown, 'stacking_share'>, RecordEstimate> = true;
void sameScreening;
void sameEstimate;

// --- upkeep events --------------------------------------------------------------------------------------

export const RecordEvent = z.object({
	id: z.string(),
	event_on: z.string().describe('The day the work was done (YYYY-MM-DD).'),
	kind: z.enum(EVENT_KIND_VALUES),
	version: z.number().int().describe('The event’s current version (a re-sent event with changed fields gets a new one).'),
	stop_board_height_in: z.number().nullable().describe('structure_setting: the stop-board height set, inches.'),
	media_added_cu_yd: z.number().nullable().describe('media_top_up: the media added, cubic yards.'),
	structure_id: z.string().nullable().describe('structure_setting (or any kind): which control structure.'),
	notes: z.string().nullable(),
	batch_id: z.string().nullable().describe('The batch the current version came from.')
});
export type RecordEvent = z.infer<typeof RecordEvent>;

export const UpkeepStatus = z.object({
	years: z.number().int().describe('The hub’s upkeep interval in years (setting `upkeep_overdue_years`).'),
	last_upkeep_on: z.string().nullable().describe('The last media top-up or inspection on or before today; null when none.'),
	due_by: z.string().describe('The last day upkeep is on time: `years` after the later of the install date and the last upkeep.'),
	overdue: z.boolean().describe('Whether the bioreactor is in service today and past `due_by`.')
});
export type UpkeepStatus = z.infer<typeof UpkeepStatus>;

export const RecordDetail = RecordSummary.extend({
	data: z.record(z.string(), z.unknown()).describe('Every field of the current version, as sent.'),
	current_findings: z.array(Finding.pick({ code: true, severity: true, column: true, value: true, rule: true, message: true })),
	versions: z.array(RecordVersionView).describe('Newest first.'),
	estimates: z.array(StoredEstimate).describe('The stored estimate under each method version computed so far, the active one first.'),
	estimate: EstimateBreakdown.nullable().describe(
		'How the active method’s estimate is made: credited acres × baseline × efficiency, and stacking on the field. Null when the active method has not been computed yet.'
	),
	screening: BioreactorScreening.nullable().describe(
		'Bioreactor (605) design screening under the active method, for records that carry design fields; null otherwise.'
	),
	events: z.array(RecordEvent).describe('The practice’s upkeep events, oldest first (by event_on, then kind).'),
	upkeep: UpkeepStatus.nullable().describe(
		'Bioreactors (605): when upkeep (a media top-up or an inspection) is due and whether it is overdue; null for other practices.'
	)
});
export type RecordDetail = z.infer<typeof RecordDetail>;

export const RecordWriteResult = z.object({
	outcome: z.enum(['created', 'updated', 'unchanged', 'withdrawn']),
	record: RecordDetail,
	findings: z.array(Finding)
});
