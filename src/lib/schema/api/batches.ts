// The intake paths: batches (uploads), their findings, and practice records.
import { z } from 'zod';
import { BATCH_MODES, BATCH_STATUSES, BATCH_TYPES, Batch, BatchFindingPage, BatchPage } from '../batch';
import {
	BioreactorScreening,
	EstimateBreakdown,
	RecordDetail,
	RecordEvent,
	RecordPage,
	RecordSummary,
	RecordWriteResult,
	StoredEstimate,
	UpkeepStatus
} from '../record-api';
import { problems } from './common';
import { needsToken, registry } from './registry';
import { practiceEventRef, practiceRecordRef } from './schema-routes';

// `.meta()` makes copies created after the OpenAPI extension of zod (./registry.ts): the originals in
// ../batch.ts and ../record-api.ts may be built first (the browser uses them too) and lack `.openapi`.
const BatchSchema = registry.register('Batch', Batch.meta({ description: 'One upload and what became of it.' }));
const BatchPageSchema = registry.register(
	'BatchPage',
	BatchPage.extend({ data: z.array(BatchSchema) }).meta({ description: 'A page of batches, newest first.' })
);
const BatchFindingPageSchema = registry.register('BatchFindingPage', BatchFindingPage.meta({ description: 'A page of findings.' }));
const RecordSummarySchema = registry.register('RecordSummary', RecordSummary.meta({ description: 'A practice record in a list.' }));
const RecordPageSchema = registry.register(
	'RecordPage',
	RecordPage.extend({ data: z.array(RecordSummarySchema) }).meta({ description: 'A page of practice records.' })
);
const StoredEstimateSchema = registry.register(
	'StoredEstimate',
	StoredEstimate.meta({ description: 'A record’s estimated reduction under one method version, as stored and summed by the rollups.' })
);
const EstimateBreakdownSchema = registry.register(
	'EstimateBreakdown',
	EstimateBreakdown.meta({
		description:
			'How a record’s estimate is made: credited acres × baseline loss × efficiency, practices stacked on a field combined as 1 − Π(1 − eᵢ).'
	})
);
const BioreactorScreeningSchema = registry.register(
	'BioreactorScreening',
	BioreactorScreening.meta({
		description:
			'Bioreactor (605) design screening, every number with its unit. Screening estimates, not a design: design and installation follow the practice standard, local codes and a licensed engineer or approved designer.'
	})
);
const RecordEventSchema = registry.register(
	'RecordEvent',
	RecordEvent.meta({
		description:
			'One upkeep event of a practice (schema `/api/v1/schema/practice-event.json`), with its kind-specific fields and current version.'
	})
);
const UpkeepStatusSchema = registry.register(
	'UpkeepStatus',
	UpkeepStatus.meta({
		description:
			'A bioreactor’s upkeep: the last media top-up or inspection, the day the next one is due (the hub’s interval after the later of that and the install date), and whether it is overdue today.'
	})
);
const RecordDetailSchema = registry.register(
	'RecordDetail',
	RecordDetail.extend({
		estimates: z
			.array(StoredEstimateSchema)
			.meta({ description: 'The stored estimate under each method version computed so far, the active one first.' }),
		estimate: EstimateBreakdownSchema.nullable().meta({
			description: 'How the active method’s estimate is made; null when the active method has not been computed for this record yet.'
		}),
		screening: BioreactorScreeningSchema.nullable().meta({
			description: 'Bioreactor design screening under the active method, for 605 records with design fields; null otherwise.'
		}),
		events: z.array(RecordEventSchema).meta({ description: 'The practice’s upkeep events, oldest first (by event_on, then kind).' }),
		upkeep: UpkeepStatusSchema.nullable().meta({
			description: 'Bioreactors (605): when upkeep is due and whether it is overdue; null for other practices.'
		})
	}).meta({
		description: 'One practice record with its versions, estimates, upkeep events and (bioreactors) design screening and upkeep status.'
	})
);
const RecordWriteResultSchema = registry.register(
	'RecordWriteResult',
	RecordWriteResult.extend({ record: RecordDetailSchema }).meta({
		description: 'What a PUT of one record did, the record now, and its warnings.'
	})
);

const XLSX = 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet';
const page = {
	limit: z.string().optional().meta({ description: 'Items per page.' }),
	cursor: z.string().optional().meta({ description: 'The opaque position from a `next` link.' })
};
const districtCode = z.string().optional().meta({ description: 'A district code, e.g. `BLH`.' });

registry.registerPath({
	method: 'post',
	path: '/api/v1/batches',
	tags: ['Batches'],
	summary: 'Send a file of practice records (or of upkeep events)',
	description: [
		'The raw body is the file: CSV (UTF-8, with or without BOM; Windows-1252 is detected and reported), XLSX (first sheet, or `sheet=`), NDJSON, or a JSON array of records. The body is streamed and archived; the answer is 202 with `Location`; poll it until `status` is `done`.',
		'',
		'`type=events` sends upkeep events (schema `/api/v1/schema/practice-event.json`) instead of practice records: each event names a practice of the district by `local_id`; an event is identified by district, `local_id`, `event_on` and `kind`, so sending it again leaves it unchanged or makes a new version.',
		'',
		'`check` writes nothing and reports what would happen; `all` saves nothing if any row has an error; `valid` saves the valid rows and reports the rest.',
		'',
		'`Idempotency-Key` is required for `all` and `valid`: the same key with the same body replays the first answer (header `Idempotent-Replayed: true`); with a different body → 422; while the first request is still being processed → 409. Keys are kept 48 hours per caller.'
	].join('\n'),
	security: needsToken('records:write'),
	request: {
		query: z.object({
			mode: z.enum(BATCH_MODES).optional().meta({ description: 'Default `check`.' }),
			type: z.enum(BATCH_TYPES).optional().meta({ description: 'What the file holds: `records` (default) or `events`.' }),
			district: districtCode.meta({ description: 'Required for administrators; district staff always send for their own district.' }),
			sheet: z.string().optional().meta({ description: 'XLSX: the sheet to read (default: the first).' })
		}),
		headers: z.object({
			'idempotency-key': z.string().optional().meta({ description: 'Required for modes `all` and `valid`; a new UUID per file.' }),
			'content-disposition': z
				.string()
				.optional()
				.meta({ description: 'Optional `attachment; filename="…"`: the file name kept with the batch.' })
		}),
		body: {
			required: true,
			content: {
				'text/csv': { schema: z.string().meta({ description: 'CSV with the schema columns as header.' }) },
				[XLSX]: { schema: z.string().meta({ format: 'binary' }) },
				'application/x-ndjson': { schema: z.string().meta({ description: 'One JSON record per line.' }) },
				'application/json': { schema: { type: 'array', items: { oneOf: [practiceRecordRef, practiceEventRef] } } }
			}
		}
	},
	responses: {
		202: {
			description: 'Accepted; the batch is checked in the background. `Location` is the batch.',
			headers: { Location: { description: '/api/v1/batches/{id}', schema: { type: 'string' } } },
			content: { 'application/json': { schema: BatchSchema } }
		},
		400: problems[400],
		401: problems[401],
		403: problems[403],
		409: problems[409],
		413: problems[413],
		415: problems[415],
		422: problems[422]
	}
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/batches',
	tags: ['Batches'],
	summary: 'Batches, newest first',
	description: 'District staff see their own district; the state roles see all.',
	security: needsToken('records:read'),
	request: {
		query: z.object({
			district: districtCode,
			status: z.enum(BATCH_STATUSES).optional(),
			mode: z.enum(BATCH_MODES).optional(),
			type: z.enum(BATCH_TYPES).optional(),
			...page
		})
	},
	responses: {
		200: { description: 'A page of batches.', content: { 'application/json': { schema: BatchPageSchema } } },
		400: problems[400],
		401: problems[401],
		403: problems[403]
	}
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/batches/{id}',
	tags: ['Batches'],
	summary: 'One batch: status, progress, counts',
	security: needsToken('records:read'),
	request: { params: z.object({ id: z.string() }) },
	responses: {
		200: { description: 'The batch (`Retry-After` while it is being checked).', content: { 'application/json': { schema: BatchSchema } } },
		401: problems[401],
		404: problems[404]
	}
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/batches/{id}/findings',
	tags: ['Batches'],
	summary: 'The findings of a batch',
	description:
		'JSON in cursor pages, or every finding as CSV with `Accept: text/csv` or `format=csv` (cells that look like formulas are prefixed with an apostrophe).',
	security: needsToken('records:read'),
	request: {
		params: z.object({ id: z.string() }),
		query: z.object({
			severity: z.enum(['error', 'warning']).optional(),
			code: z.string().optional(),
			column: z.string().optional(),
			format: z.enum(['json', 'csv']).optional(),
			...page
		})
	},
	responses: {
		200: {
			description: 'Findings in file order.',
			content: { 'application/json': { schema: BatchFindingPageSchema }, 'text/csv': { schema: z.string() } }
		},
		400: problems[400],
		401: problems[401],
		404: problems[404]
	}
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/records',
	tags: ['Records'],
	summary: 'Practice records, newest first',
	description: 'District staff see their own district only. `fiscal_year` is the state fiscal year (named for the year it ends).',
	security: needsToken('records:read'),
	request: {
		query: z.object({
			district: districtCode,
			county: z.string().optional().meta({ description: '5-digit county FIPS code.' }),
			practice: z.string().optional().meta({ description: 'Practice code.' }),
			fiscal_year: z.string().optional().meta({ description: 'e.g. 2025.' }),
			status: z.enum(['installed', 'withdrawn']).optional(),
			local_id: z.string().optional(),
			...page
		})
	},
	responses: {
		200: { description: 'A page of records.', content: { 'application/json': { schema: RecordPageSchema } } },
		400: problems[400],
		401: problems[401],
		403: problems[403]
	}
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/records/{id}',
	tags: ['Records'],
	summary: 'One record with all its versions, its estimates, design screening and upkeep events',
	description: [
		'The current fields, the warnings the current version carries, and every version with what changed and the batch it came from.',
		'',
		'`estimates`: the stored estimate (N and P lb/yr mean, low, high; credited acres) under each reduction method version computed so far, the active one first. `estimate`: how the active one is made (baseline, own and credited efficiency, the practices stacked on the same field and this record’s share of their combined reduction).',
		'',
		'`screening`: for bioreactors (605) with design fields, the design screening under the active method (peak flow, treated share, retention, main capacity, warnings), every number with its unit. These are screening estimates, not a design.',
		'',
		'`events`: the practice’s upkeep events (media top-ups, structure settings, mowing, repairs, inspections), oldest first, each with its kind-specific fields and current version. `upkeep`: for bioreactors, the last media top-up or inspection, the day the next is due (the hub setting `upkeep_overdue_years` after the later of that and the install date) and whether it is overdue today; null for other practices.'
	].join('\n'),
	security: needsToken('records:read'),
	request: { params: z.object({ id: z.string() }) },
	responses: {
		200: { description: 'The record.', content: { 'application/json': { schema: RecordDetailSchema } } },
		401: problems[401],
		404: problems[404]
	}
});

registry.registerPath({
	method: 'put',
	path: '/api/v1/records/{district}/{local_id}',
	tags: ['Records'],
	summary: 'Send one record',
	description:
		'For clients that send records one at a time: the same checks, versioning and change tracking as a batch row. Sending the same content again changes nothing.',
	security: needsToken('records:write'),
	request: {
		params: z.object({ district: z.string(), local_id: z.string() }),
		body: { required: true, content: { 'application/json': { schema: practiceRecordRef } } }
	},
	responses: {
		200: { description: 'Updated, withdrawn or unchanged.', content: { 'application/json': { schema: RecordWriteResultSchema } } },
		201: { description: 'Created.', content: { 'application/json': { schema: RecordWriteResultSchema } } },
		400: problems[400],
		401: problems[401],
		403: problems[403],
		413: problems[413],
		415: problems[415],
		422: problems[422]
	}
});
