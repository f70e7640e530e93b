// The record schema's own paths: the JSON Schema, the CSV and XLSX templates, the OpenAPI document.
import { practiceEventJsonSchema } from '../event-json-schema';
import { practiceRecordJsonSchema } from '../json-schema';
import { registry } from './registry';

/** The record schema as an OpenAPI component: exactly the JSON Schema served at practice-record.json. */
const { $schema: _s, $id: _i, ...component } = practiceRecordJsonSchema();
export const practiceRecordComponent = registry.registerComponent('schemas', 'PracticeRecordV1', component as never);
/** `{ $ref }` to use in other areas' paths for a practice record as sent. */
export const practiceRecordRef = practiceRecordComponent.ref;

const XLSX = 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet';

registry.registerPath({
	method: 'get',
	path: '/api/v1/schema/practice-record.json',
	tags: ['Record schema'],
	summary: 'The practice record JSON Schema (draft 2020-12)',
	description: 'Generated from the same schema the hub checks uploads with. Public.',
	responses: {
		200: {
			description: 'The JSON Schema, with `$id` and `version`.',
			content: { 'application/schema+json': { schema: practiceRecordRef } }
		}
	}
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/schema/practice-record.csv',
	tags: ['Record schema'],
	summary: 'The CSV template (header row)',
	description: 'One header line with every column in order. Public.',
	responses: { 200: { description: 'CSV (UTF-8).', content: { 'text/csv': { schema: { type: 'string' } } } } }
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/schema/practice-record.xlsx',
	tags: ['Record schema'],
	summary: 'The XLSX template',
	description:
		"A workbook whose first sheet has the header row with a note on each column, drop-down lists for practice codes and the hub state's counties, and number and date validation; a second sheet lists every column. Public.",
	responses: { 200: { description: 'XLSX workbook.', content: { [XLSX]: { schema: { type: 'string', format: 'binary' } } } } }
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/openapi.json',
	tags: ['Service'],
	summary: 'This OpenAPI document',
	responses: { 200: { description: 'OpenAPI 3.1.', content: { 'application/json': { schema: { type: 'object' } } } } }
});

/** The practice event schema as an OpenAPI component: exactly the JSON Schema served at practice-event.json. */
const { $schema: _es, $id: _ei, ...eventComponent } = practiceEventJsonSchema();
export const practiceEventComponent = registry.registerComponent('schemas', 'PracticeEventV1', eventComponent as never);
export const practiceEventRef = practiceEventComponent.ref;

registry.registerPath({
	method: 'get',
	path: '/api/v1/schema/practice-event.json',
	tags: ['Record schema'],
	summary: 'The practice event (upkeep record) JSON Schema (draft 2020-12)',
	description: 'Generated from the same schema the hub checks event uploads (`POST /api/v1/batches?type=events`) with. Public.',
	responses: {
		200: {
			description: 'The JSON Schema, with `$id` and `version`.',
			content: { 'application/schema+json': { schema: practiceEventRef } }
		}
	}
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/schema/practice-event.csv',
	tags: ['Record schema'],
	summary: 'The practice event CSV template (header row)',
	description: 'One header line with every event column in order. Public.',
	responses: { 200: { description: 'CSV (UTF-8).', content: { 'text/csv': { schema: { type: 'string' } } } } }
});

registry.registerPath({
	method: 'get',
	path: '/api/v1/schema/practice-event.xlsx',
	tags: ['Record schema'],
	summary: 'The practice event XLSX template',
	description:
		'A workbook whose first sheet, "Events", has the header row with a note on each column, a drop-down list of kinds, and number and date validation; a second sheet lists every column. Public.',
	responses: { 200: { description: 'XLSX workbook.', content: { [XLSX]: { schema: { type: 'string', format: 'binary' } } } } }
});
