import { PRACTICE_CATALOG } from '$lib/domain/practice-catalog';
import { dataDictionary } from '$lib/schema/dictionary';
import { FURTHER_CHECKS, PRACTICE_RECORD_SCHEMA_ID } from '$lib/schema/json-schema';
import { SCHEMA_VERSION } from '$lib/schema/practice-record';
import { CSV_TEMPLATE_FILE_NAME, XLSX_TEMPLATE_FILE_NAME } from '$lib/schema/templates';
import { eventDataDictionary } from '$lib/schema/event-dictionary';
import { EVENT_FURTHER_CHECKS, PRACTICE_EVENT_SCHEMA_ID } from '$lib/schema/event-json-schema';
import {
	EVENT_CSV_TEMPLATE_FILE_NAME,
	EVENT_KINDS,
	EVENT_KIND_VALUES,
	EVENT_SCHEMA_VERSION,
	EVENT_XLSX_TEMPLATE_FILE_NAME
} from '$lib/schema/practice-event';
import type { PageServerLoad } from './$types';

export const load = (() => ({
	version: SCHEMA_VERSION,
	schemaId: PRACTICE_RECORD_SCHEMA_ID,
	groups: dataDictionary(),
	furtherChecks: [...FURTHER_CHECKS],
	practices: PRACTICE_CATALOG.map((p) => ({ code: p.code, name: p.name, basis: p.credited_basis })),
	files: { csv: CSV_TEMPLATE_FILE_NAME, xlsx: XLSX_TEMPLATE_FILE_NAME },
	events: {
		version: EVENT_SCHEMA_VERSION,
		schemaId: PRACTICE_EVENT_SCHEMA_ID,
		groups: eventDataDictionary(),
		furtherChecks: [...EVENT_FURTHER_CHECKS],
		kinds: EVENT_KIND_VALUES.map((k) => ({
			kind: k,
			title: EVENT_KINDS[k].title,
			description: EVENT_KINDS[k].description,
			practices: EVENT_KINDS[k].practices
		})),
		files: { csv: EVENT_CSV_TEMPLATE_FILE_NAME, xlsx: EVENT_XLSX_TEMPLATE_FILE_NAME }
	}
})) satisfies PageServerLoad;
