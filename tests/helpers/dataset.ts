// What must never appear in research dataset output: the columns, and the demo scenario's identifying
// values read from the database (names, e-mails, local ids, field and operation ids, coordinates, notes).
import { sql, type Kysely } from 'kysely';
import type { Database } from '$lib/server/db/schema';

export const FORBIDDEN_COLUMNS = [
	'id',
	'record_id',
	'local_id',
	'field_id',
	'operation_id',
	'operation_key',
	'operator_name',
	'latitude',
	'longitude',
	'huc12',
	'installed_on',
	'withdrawn_on',
	'notes',
	'cost_total_usd',
	'cost_share_usd',
	'funding_program',
	'district_id',
	'district'
];

/** Identifying strings of the demo data (at least 5 characters, so short codes do not match by chance). */
export async function forbiddenValues(db: Kysely<Database>): Promise<string[]> {
	const rows = await sql<{ v: string | null }>`
		select local_id as v from records
		union select field_id from records union select operation_id from records
		union select data->>'operator_name' from records union select data->>'notes' from records
		union select data->>'latitude' from records union select data->>'longitude' from records
		union select installed_on::text from records
		union select name from users union select email from users
		union select c->>'name' from districts, jsonb_array_elements(contacts) c
		union select c->>'email' from districts, jsonb_array_elements(contacts) c`.execute(db);
	return [...new Set(rows.rows.map((r) => r.v).filter((v): v is string => !!v && v.length >= 5))];
}

/**
 * The forbidden values found in a text output as whole fields (CSV cells, JSON strings and numbers, XLSX
 * cell values, Markdown table cells), so a scan over a large release stays linear in the text.
 */
export function leakedValues(text: string, values: readonly string[]): string[] {
	const tokens = new Set(
		text
			.split(/[,\n\r"{}[\]:|\t]/)
			.map((t) => t.trim())
			.filter((t) => t.length >= 5)
	);
	return values.filter((v) => tokens.has(v.trim()));
}
