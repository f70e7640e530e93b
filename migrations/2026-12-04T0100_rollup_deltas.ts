// Rollup deltas: a refresh adds each changed record's new contribution to the stored summary cells and
// subtracts its old one. Distinct-operation counts then need the other records of the operations the
// change touches: this index finds them (a district's records of one operation) without scanning the
// district.
// Frozen: never import application code here; later changes go in new, later-dated migrations.
import { sql, type Kysely } from 'kysely';

export async function up(db: Kysely<any>): Promise<void> {
	await sql`create index record_estimates_operation_idx on record_estimates (method_version, district_id, operation_key)`.execute(db);
}

export async function down(db: Kysely<any>): Promise<void> {
	await sql`drop index if exists record_estimates_operation_idx`.execute(db);
}
