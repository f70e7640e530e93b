// The published JSON Schema (draft 2020-12) of a practice record as clients send it, generated from
// the one zod source with z.toJSONSchema, plus the per-practice and withdrawal rules as if/then
// clauses drawn from the practice catalog. Pure.
import { PRACTICE_CATALOG } from '../domain/practice-catalog';
import { columnJsonSchemaOf, publishedJsonSchema } from './column-schema';
import { PracticeRecordV1InputSchema, PracticeRecordV1Schema, SCHEMA_VERSION, type PracticeRecordColumn } from './practice-record';

export const PRACTICE_RECORD_SCHEMA_ID = `urn:runnel:schema:practice-record:v${SCHEMA_VERSION}`;

/** Rules the JSON Schema cannot state, checked by the hub (and `runnel check`). Plain language. */
export const FURTHER_CHECKS: readonly string[] = [
	"county_fips must be a county of the hub's state that the sending district serves.",
	'installed_on and withdrawn_on may not be after today; withdrawn_on may not be before installed_on.',
	'withdrawn_on is only allowed when status is withdrawn.',
	'cost_share_usd may not be more than cost_total_usd.',
	'latitude and longitude are sent together; a point outside the stated county is flagged for review.',
	'local_id may appear only once per file.',
	'Acreages far outside the usual range for the practice are flagged for review (a warning, not a rejection).',
	'Bioreactor (605) details are screened against design rules of thumb (warnings only).'
];

type JsonObject = Record<string, unknown>;

function perPracticeRules(): JsonObject[] {
	const rules: JsonObject[] = [];
	for (const basis of ['extent_acres', 'drainage_area_acres'] as const) {
		const codes = PRACTICE_CATALOG.filter((p) => p.credited_basis === basis).map((p) => p.code);
		rules.push({
			if: { properties: { practice_code: { enum: codes } }, required: ['practice_code'] },
			then: { required: [basis], properties: { [basis]: { type: 'number' } } }
		});
	}
	rules.push({
		if: { properties: { status: { const: 'withdrawn' } }, required: ['status'] },
		then: { required: ['withdrawn_on'], properties: { withdrawn_on: { type: 'string' } } }
	});
	return rules;
}

/** The JSON Schema of one record as sent (optional columns may be omitted or null). */
export function practiceRecordJsonSchema(): JsonObject {
	return publishedJsonSchema(PracticeRecordV1InputSchema, PRACTICE_RECORD_SCHEMA_ID, SCHEMA_VERSION, perPracticeRules(), FURTHER_CHECKS);
}

/** The JSON Schema of one column of the normalised record (its constraints, before null is allowed). */
export function columnJsonSchema(col: PracticeRecordColumn): JsonObject {
	return columnJsonSchemaOf(PracticeRecordV1Schema.shape[col]);
}
