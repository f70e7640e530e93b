// The review queue and field verification paths.
import { z } from 'zod';
import { REVIEW_STATUSES, ReviewDecisionInput, ReviewDecisionView, ReviewItem, ReviewPage } from '../reviews';
import { DrawInput, DrawPage, DrawView, OutcomeInput, VISIT_STATES, VisitPage, VisitView } from '../verification';
import { problems } from './common';
import { needsToken, registry } from './registry';

// `.meta()` copies carry the OpenAPI extension (see ./batches.ts).
const ReviewItemSchema = registry.register('ReviewItem', ReviewItem.meta({ description: 'A flagged record in the review queue.' }));
const ReviewPageSchema = registry.register(
	'ReviewPage',
	ReviewPage.extend({ data: z.array(ReviewItemSchema) }).meta({ description: 'A page of the review queue, oldest first.' })
);
const ReviewDecisionInputSchema = registry.register(
	'ReviewDecisionInput',
	ReviewDecisionInput.meta({ description: 'A manager’s decision.' })
);
const ReviewDecisionSchema = registry.register('ReviewDecision', ReviewDecisionView.meta({ description: 'A stored decision.' }));
const ReviewDecisionResultSchema = registry.register(
	'ReviewDecisionResult',
	z
		.object({
			review: ReviewDecisionSchema,
			status: z.enum(REVIEW_STATUSES),
			mailed_to: z.number().int().describe('How many district users were e-mailed (returned only).')
		})
		.meta({ description: 'The decision and the record’s queue status now.' })
);
const DrawInputSchema = registry.register('VerificationDrawInput', DrawInput.meta({ description: 'Parameters of a draw.' }));
const DrawSchema = registry.register('VerificationDraw', DrawView.meta({ description: 'A fiscal year’s field verification sample.' }));
const DrawPageSchema = registry.register(
	'VerificationDrawPage',
	DrawPage.extend({ data: z.array(DrawSchema) }).meta({ description: 'Draws, newest fiscal year first.' })
);
const OutcomeInputSchema = registry.register('VisitOutcomeInput', OutcomeInput.meta({ description: 'What a field visit found.' }));
const VisitSchema = registry.register('VerificationVisit', VisitView.meta({ description: 'One drawn practice to visit.' }));
const VisitPageSchema = registry.register(
	'VerificationVisitPage',
	VisitPage.extend({ data: z.array(VisitSchema) }).meta({ description: 'A page of field visits.' })
);

const page = {
	limit: z.string().optional().meta({ description: 'Items per page.' }),
	cursor: z.string().optional().meta({ description: 'The opaque position from a `next` link.' })
};
const id = z.object({ id: z.string() });

registry.registerPath({
	method: 'get',
	path: '/api/v1/reviews',
	tags: ['Reviews'],
	summary: 'The review queue: records whose current version carries warnings',
	description:
		'Oldest first. Managers see every district; district staff see the review state of their own records. By default only `open` items; `status=all` lists every status. A new version of a record re-opens review only when it brings warnings no `verified` decision accepted.',
	security: needsToken('records:read'),
	request: {
		query: z.object({
			district: z.string().optional().meta({ description: 'A district code.' }),
			practice: z.string().optional().meta({ description: 'Practice code.' }),
			code: z.string().optional().meta({ description: 'A finding code the current version carries, e.g. `acres-implausible`.' }),
			min_age_days: z.string().optional().meta({ description: 'Only items waiting at least this many days.' }),
			max_age_days: z.string().optional().meta({ description: 'Only items waiting at most this many days.' }),
			status: z
				.enum([...REVIEW_STATUSES, 'all'])
				.optional()
				.meta({ description: 'Default `open`.' }),
			...page
		})
	},
	responses: {
		200: { description: 'A page of the queue.', content: { 'application/json': { schema: ReviewPageSchema } } },
		400: problems[400],
		401: problems[401],
		403: problems[403]
	}
});

registry.registerPath({
	method: 'post',
	path: '/api/v1/records/{id}/review',
	tags: ['Reviews'],
	summary: 'Decide on a flagged record (manager only)',
	description:
		'`verified` accepts the current warnings (a note is required); `returned` sends the record back to its district with a comment (required), which is e-mailed to the district’s users and shown on their home page until a new version of the record arrives. Who and when are stored, and the audit log records it.',
	security: needsToken(),
	request: { params: id, body: { required: true, content: { 'application/json': { schema: ReviewDecisionInputSchema } } } },
	responses: {
		201: { description: 'The decision was stored.', content: { 'application/json': { schema: ReviewDecisionResultSchema } } },
		400: problems[400],
		401: problems[401],
		403: problems[403],
		404: problems[404],
		409: problems[409],
		415: problems[415],
		422: problems[422]
	}
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/verification/draws',
	tags: ['Field verification'],
	summary: 'Field verification draws, newest fiscal year first',
	security: needsToken('records:read'),
	responses: {
		200: { description: 'The draws.', content: { 'application/json': { schema: DrawPageSchema } } },
		401: problems[401],
		403: problems[403]
	}
});

registry.registerPath({
	method: 'post',
	path: '/api/v1/verification/draws',
	tags: ['Field verification'],
	summary: 'Draw a fiscal year’s sample of in-service practices (manager only)',
	description:
		'Stratified by district (a percentage, rounded up, with a minimum per district), weighted toward edge-of-field practices and practices never visited. The seed is stored and printed: the same seed over the same practices draws the same sample. One draw per fiscal year (409 for a second).',
	security: needsToken(),
	request: { body: { required: true, content: { 'application/json': { schema: DrawInputSchema } } } },
	responses: {
		201: { description: 'The draw.', content: { 'application/json': { schema: DrawSchema } } },
		401: problems[401],
		403: problems[403],
		409: problems[409],
		415: problems[415],
		422: problems[422]
	}
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/verification/draws/{id}',
	tags: ['Field verification'],
	summary: 'One draw with its per-district figures (share verified working)',
	security: needsToken('records:read'),
	request: { params: id },
	responses: {
		200: { description: 'The draw.', content: { 'application/json': { schema: DrawSchema } } },
		401: problems[401],
		404: problems[404]
	}
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/verification/draws/{id}/export',
	tags: ['Field verification'],
	summary: 'The sample and its outcomes as CSV or XLSX (streamed)',
	security: needsToken('records:read'),
	request: { params: id, query: z.object({ format: z.enum(['csv', 'xlsx']).optional().meta({ description: 'Default `csv`.' }) }) },
	responses: {
		200: {
			description: 'The file.',
			content: {
				'text/csv': { schema: z.string() },
				'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet': { schema: z.string().meta({ format: 'binary' }) }
			}
		},
		400: problems[400],
		401: problems[401],
		404: problems[404]
	}
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/verification/visits',
	tags: ['Field verification'],
	summary: 'Field visits: due, overdue and done',
	description: 'District staff see their own district’s visits only.',
	security: needsToken('records:read'),
	request: {
		query: z.object({
			draw: z.string().optional().meta({ description: 'A draw id.' }),
			district: z.string().optional().meta({ description: 'A district code.' }),
			state: z.enum(VISIT_STATES).optional(),
			unconfirmed: z.enum(['true', 'false']).optional().meta({ description: '`true`: `not_found` visits waiting for a manager.' }),
			...page
		})
	},
	responses: {
		200: { description: 'A page of visits.', content: { 'application/json': { schema: VisitPageSchema } } },
		400: problems[400],
		401: problems[401],
		403: problems[403]
	}
});

registry.registerPath({
	method: 'post',
	path: '/api/v1/verification/visits/{id}/outcome',
	tags: ['Field verification'],
	summary: 'Record what a visit found (district for its own records, or the manager)',
	description:
		'`needs_repair` requires `repair_due_on`. A district’s `not_found` waits for a manager’s confirmation; a manager’s is confirmed at once. A confirmed `not_found` withdraws the record’s credit from `visited_on` (rollups follow) and can no longer change.',
	security: needsToken(),
	request: { params: id, body: { required: true, content: { 'application/json': { schema: OutcomeInputSchema } } } },
	responses: {
		200: { description: 'The visit now.', content: { 'application/json': { schema: VisitSchema } } },
		401: problems[401],
		403: problems[403],
		404: problems[404],
		409: problems[409],
		415: problems[415],
		422: problems[422]
	}
});

registry.registerPath({
	method: 'post',
	path: '/api/v1/verification/visits/{id}/confirm',
	tags: ['Field verification'],
	summary: 'Confirm a district’s `not_found` (manager only): the record’s credit ends on the visit day',
	security: needsToken(),
	request: { params: id },
	responses: {
		200: { description: 'The visit now.', content: { 'application/json': { schema: VisitSchema } } },
		401: problems[401],
		403: problems[403],
		404: problems[404],
		409: problems[409]
	}
});
