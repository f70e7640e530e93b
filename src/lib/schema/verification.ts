// Field verification as the API answers it and as the API and the pages take it.
import { z } from 'zod';

export const VISIT_OUTCOMES = ['in_place_working', 'needs_repair', 'not_found'] as const;
export type VisitOutcomeCode = (typeof VISIT_OUTCOMES)[number];
export const VISIT_OUTCOME_LABELS: Record<VisitOutcomeCode, string> = {
	in_place_working: 'In place and working',
	needs_repair: 'Needs repair',
	not_found: 'Not found'
};
export const VISIT_STATES = ['due', 'overdue', 'done'] as const;

const isoDate = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'A date as YYYY-MM-DD.');

export const DrawInput = z
	.object({
		fiscal_year: z.coerce.number().int().min(1990).max(2200).describe('State fiscal year (named for the year it ends).'),
		seed: z
			.string()
			.trim()
			.regex(/^[A-Za-z0-9._:-]{1,64}$/, 'A seed is 1–64 letters, digits, dots, colons, underscores or hyphens.')
			.optional()
			.describe('Leave out for a new random seed; give a printed seed to repeat a draw.'),
		percent: z.coerce.number().gt(0).max(100).default(5).describe('Share of each district’s in-service practices to visit, in percent.'),
		min_per_district: z.coerce.number().int().min(0).max(1000).default(2).describe('Visits per district at least.'),
		edge_weight: z.coerce.number().min(1).max(100).default(2).describe('Weight factor of edge-of-field practices.'),
		never_visited_weight: z.coerce.number().min(1).max(100).default(2).describe('Weight factor of practices never visited before.'),
		due_on: isoDate.optional().describe('When the visits are due (default: the last day of the fiscal year).')
	})
	.strict();
export type DrawInput = z.infer<typeof DrawInput>;

export const OutcomeInput = z
	.object({
		outcome: z.enum(VISIT_OUTCOMES),
		visited_on: isoDate.describe('The day of the visit (not in the future).'),
		repair_due_on: isoDate.optional().describe('Required for `needs_repair`: when the repair is due.'),
		note: z.string().trim().max(2000).optional()
	})
	.strict()
	.superRefine((v, ctx) => {
		if (v.outcome === 'needs_repair' && !v.repair_due_on)
			ctx.addIssue({ code: 'custom', path: ['repair_due_on'], message: 'A repair due date is required when the practice needs repair.' });
		if (v.outcome !== 'needs_repair' && v.repair_due_on)
			ctx.addIssue({ code: 'custom', path: ['repair_due_on'], message: 'A repair due date goes only with `needs_repair`.' });
	});
export type OutcomeInput = z.infer<typeof OutcomeInput>;

export const DrawView = z.object({
	id: z.string(),
	fiscal_year: z.number().int(),
	seed: z.string(),
	params: z.object({ percent: z.number(), min_per_district: z.number().int(), edge_weight: z.number(), never_visited_weight: z.number() }),
	population: z.number().int().describe('In-service practices the draw chose from.'),
	sample_size: z.number().int(),
	due_on: z.string(),
	drawn_by: z.string(),
	created_at: z.string(),
	districts: z.array(
		z.object({
			code: z.string(),
			name: z.string(),
			population: z.number().int(),
			drawn: z.number().int(),
			done: z.number().int(),
			working: z.number().int(),
			share_working: z.number().nullable().describe('Working ÷ visited (null before any visit).')
		})
	)
});
export type DrawView = z.infer<typeof DrawView>;

export const VisitView = z.object({
	id: z.string(),
	draw_id: z.string(),
	fiscal_year: z.number().int(),
	record_id: z.string(),
	local_id: z.string(),
	district: z.object({ code: z.string(), name: z.string() }),
	practice_code: z.string(),
	edge_of_field: z.boolean(),
	never_visited: z.boolean().describe('At the time of the draw.'),
	due_on: z.string(),
	state: z.enum(VISIT_STATES),
	outcome: z.enum(VISIT_OUTCOMES).nullable(),
	visited_on: z.string().nullable(),
	repair_due_on: z.string().nullable(),
	note: z.string().nullable(),
	recorded_by: z.string().nullable(),
	recorded_at: z.string().nullable(),
	confirmed_at: z.string().nullable().describe('`not_found` only: when a manager confirmed it (credit withdrawn from `visited_on`).')
});
export type VisitView = z.infer<typeof VisitView>;

export const DrawPage = z.object({ data: z.array(DrawView), next: z.string().nullable() });
export const VisitPage = z.object({ data: z.array(VisitView), next: z.string().nullable() });
