import { PRACTICE_CATALOG } from '$lib/domain/practice-catalog';
import { dataDictionary } from '$lib/schema/dictionary';
import { FURTHER_CHECKS, PRACTICE_RECORD_SCHEMA_ID } from '$lib/schema/json-schema';
import { SCHEMA_VERSION } from '$lib/schema/practice-record';
import { CSV_TEMPLATE_FILE_NAME, XLSX_TEMPLATE_FILE_NAME } from '$lib/schema/templates';
import type { PageServerLoad } from './$types';

export const load = (() => ({
	version: SCHEMA_VERSION,
	schemaId: PRACTICE_RECORD_SCHEMA_ID,
	groups: dataDictionary(),
	furtherChecks: [...FURTHER_CHECKS],
	practices: PRACTICE_CATALOG.map((p) => ({ code: p.code, name: p.name, basis: p.credited_basis })),
	files: { csv: CSV_TEMPLATE_FILE_NAME, xlsx: XLSX_TEMPLATE_FILE_NAME }
})) satisfies PageServerLoad;
