// Summary cells are patched in place when a batch commits (only their counts and amounts change, none of
// their indexed columns), so PostgreSQL can write the new row version on the same page without touching the
// indexes (a HOT update) — if the page has room. Leave 30% of each page free for that. Pages written before
// this keep no room until the cells are rebuilt.
// Frozen: never import application code here; later changes go in new, later-dated migrations.
import { sql, type Kysely } from 'kysely';

export async function up(db: Kysely<any>): Promise<void> {
	await sql`alter table rollup_cells set (fillfactor = 70)`.execute(db);
}

export async function down(db: Kysely<any>): Promise<void> {
	await sql`alter table rollup_cells reset (fillfactor)`.execute(db);
}
