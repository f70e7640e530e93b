// A counter of changes to the stored estimates: every statement that inserts, deletes or re-writes estimate
// rows (setting computed_at, as every writer does) adds one, in its own transaction, so the count a reader
// sees moves exactly when committed estimates do. The research dataset keys its cached small-cell decisions
// on it: one row read per request, where comparing max(computed_at) and count(*) scanned the table (and
// could miss a transaction that started earlier but committed later).
// Frozen: never import application code here; later changes go in new, later-dated migrations.
import { sql, type Kysely } from 'kysely';

export async function up(db: Kysely<any>): Promise<void> {
	await sql`create table estimate_generation (id boolean primary key default true check (id), n bigint not null)`.execute(db);
	await sql`insert into estimate_generation (id, n) values (true, 1)`.execute(db);
	await sql
		.raw(
			`create function estimate_generation_bump() returns trigger language plpgsql as $$
			begin
				insert into estimate_generation (id, n) values (true, 1) on conflict (id) do update set n = estimate_generation.n + 1;
				return null;
			end $$`
		)
		.execute(db);
	await sql`create trigger record_estimates_generation after insert or delete or update of computed_at on record_estimates
		for each statement execute function estimate_generation_bump()`.execute(db);
}

export async function down(db: Kysely<any>): Promise<void> {
	await sql`drop trigger if exists record_estimates_generation on record_estimates`.execute(db);
	await sql`drop function if exists estimate_generation_bump()`.execute(db);
	await sql`drop table if exists estimate_generation`.execute(db);
}
