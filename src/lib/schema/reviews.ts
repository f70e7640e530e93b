// The review queue as the API answers it, and a manager's decision as the API and the page take it.
import { z } from 'zod';

export const REVIEW_DECISIONS = ['verified', 'returned'] as const;
export const REVIEW_STATUSES = ['open', 'verified', 'returned', 'cleared'] as const;

export const ReviewDecisionInput = z
	.object({
		decision: z.enum(REVIEW_DECISIONS).describe('`verified`: the warnings are accepted; `returned`: sent back to the district.'),
		comment: z
			.string()
			.trim()
			.min(1, 'Write a note (verified) or a comment for the district (returned).')
			.max(4000, 'At most 4000 characters.')
			.describe('Required: the note of a verification, or the comment mailed to the district with a return.')
	})
	.strict();
export type ReviewDecisionInput = z.infer<typeof ReviewDecisionInput>;

export const ReviewDecisionView = z.object({
	id: z.string(),
	decision: z.enum(REVIEW_DECISIONS),
	comment: z.string(),
	version: z.number().int().describe('The record version decided on.'),
	decided_by: z.string().describe('The name of the manager who decided.'),
	decided_at: z.string(),
	cleared_at: z.string().nullable().describe('`returned` only: when a new version of the record arrived.')
});
export type ReviewDecisionView = z.infer<typeof ReviewDecisionView>;

export const ReviewItem = z.object({
	record_id: z.string(),
	district: z.object({ code: z.string(), name: z.string() }),
	local_id: z.string(),
	practice_code: z.string(),
	version: z.number().int().describe('The current version of the record.'),
	status: z
		.enum(REVIEW_STATUSES)
		.describe('`open`: waiting for a decision; `verified`/`returned`: decided; `cleared`: no warnings any more.'),
	opened_at: z.string().describe('When the record (last) entered the queue.'),
	age_days: z.number().int().describe('Whole days since `opened_at`.'),
	warnings: z.array(z.object({ code: z.string(), column: z.string().nullable(), value: z.string().nullable(), message: z.string() })),
	last_decision: ReviewDecisionView.nullable(),
	links: z.object({ record: z.string() })
});
export type ReviewItem = z.infer<typeof ReviewItem>;

export const ReviewPage = z.object({ data: z.array(ReviewItem), next: z.string().nullable() });
