// The published JSON Schema (draft 2020-12) of a practice event as clients send it, generated from the
// one zod source (practice-event.ts) with z.toJSONSchema, plus the kind-specific rules as if/then
// clauses. Pure.
import { columnJsonSchemaOf, publishedJsonSchema } from './column-schema';
import {
	EVENT_COLUMN_INFO,
	EVENT_SCHEMA_VERSION,
	PRACTICE_EVENT_COLUMNS,
	PracticeEventV1InputSchema,
	PracticeEventV1Schema,
	type PracticeEventColumn
} from './practice-event';

export const PRACTICE_EVENT_SCHEMA_ID = `urn:runnel:schema:practice-event:v${EVENT_SCHEMA_VERSION}`;

/** Rules the JSON Schema cannot state, checked by the hub (and `runnel check --type events`). */
export const EVENT_FURTHER_CHECKS: readonly string[] = [
	'local_id must be a practice record of the sending district already at the hub (an error otherwise).',
	'event_on may not be after today, nor before the practice’s installed_on; an event after the practice was withdrawn is flagged for review.',
	'A kind that is unusual for the practice (e.g. a media top-up of anything but a bioreactor, 605) is flagged for review.',
	'Detail columns of another kind (e.g. media_added_cu_yd on an inspection) are kept but flagged.',
	'The same local_id, event_on and kind may appear only once per file; sending it again later updates that event (a new version).'
];

type JsonObject = Record<string, unknown>;

function perKindRules(): JsonObject[] {
	return PRACTICE_EVENT_COLUMNS.filter((c) => EVENT_COLUMN_INFO[c].required_for).map((c) => ({
		if: { properties: { kind: { enum: EVENT_COLUMN_INFO[c].required_for } }, required: ['kind'] },
		then: { required: [c], properties: { [c]: { type: 'number' } } }
	}));
}

/** The JSON Schema of one event as sent (optional columns may be omitted or null). */
export function practiceEventJsonSchema(): JsonObject {
	return publishedJsonSchema(
		PracticeEventV1InputSchema,
		PRACTICE_EVENT_SCHEMA_ID,
		EVENT_SCHEMA_VERSION,
		perKindRules(),
		EVENT_FURTHER_CHECKS
	);
}

/** The JSON Schema of one column (its constraints, before null is allowed). */
export function eventColumnJsonSchema(col: PracticeEventColumn): JsonObject {
	return columnJsonSchemaOf(PracticeEventV1Schema.shape[col]);
}
