// The research dataset's per-record values, stored with each estimate instead of computed on every export:
// - pub_acres and the six pub_n_* / pub_p_* columns are generated from the estimate itself: credited acres
//   rounded for publication (whole acres below 100, multiples of 5 from there on) and the estimates scaled
//   to those acres and rounded to 0.1 lb, in float8 with JavaScript's Math.round semantics (toRow in
//   src/lib/domain/anonymise.ts; tests/api/dataset-sql-rows.test.ts holds the two equal);
// - pub_install_year, pub_install_month, pub_funding_program and pub_included (installed, or in service in
//   some fiscal year) are copied from the record by a trigger whenever an estimate row is written, and
//   pub_pid (the pseudonymous id) is set by it when the writing transaction carries the pseudonym key
//   (runnel.dataset_ipad / runnel.dataset_opad; the rollup writers set them). Rows without a pid are filled
//   by the dataset service before it reads them, and its queries compute any pid still missing.
// Only what does not depend on the small-cell decisions is stored; those are applied when the rows are read.
// Frozen: never import application code here; later changes go in new, later-dated migrations.
import { sql, type Kysely } from 'kysely';

const jsRound = (x: string) => `(floor(${x}) + case when (${x}) - floor(${x}) >= 0.5 then 1 else 0 end)`;
const EXACT = `coalesce(credited_acres::float8, 0)`;
const ACRES = `(case when not (${EXACT} > 0) then 0::float8 when ${jsRound(EXACT)} < 100 then ${jsRound(EXACT)} else ${jsRound(`${EXACT} / 5`)} * 5 end)`;
const SCALE = `(case when ${EXACT} > 0 then ${ACRES} / ${EXACT} else 0 end)`;
const scaled = (column: string) => `(${jsRound(`${column}::float8 * ${SCALE} * 10`)} / 10)`;

const FILL = `
create function record_estimates_published() returns trigger language plpgsql as $$
declare
	r record;
	ipad text := current_setting('runnel.dataset_ipad', true);
	opad text := current_setting('runnel.dataset_opad', true);
begin
	select installed_on, status, funding_program into r from records where id = new.record_id;
	new.pub_install_year := date_part('year', r.installed_on)::smallint;
	new.pub_install_month := date_part('month', r.installed_on)::smallint;
	new.pub_funding_program := r.funding_program;
	new.pub_included := r.status = 'installed' or new.state_fy_first is not null;
	if tg_op = 'INSERT' or new.pub_pid is null then
		if coalesce(ipad, '') <> '' and coalesce(opad, '') <> '' then
			new.pub_pid := encode(sha256(decode(opad, 'hex') || sha256(decode(ipad, 'hex') || convert_to(new.record_id::text, 'UTF8'))), 'hex');
		else
			new.pub_pid := null;
		end if;
	end if;
	return new;
end $$`;

export async function up(db: Kysely<any>): Promise<void> {
	const generated = ['n_lb_mean', 'n_lb_low', 'n_lb_high', 'p_lb_mean', 'p_lb_low', 'p_lb_high']
		.map((c) => `add column pub_${c.replace('_lb', '')} float8 not null generated always as (${scaled(c)}) stored`)
		.join(',\n');
	await sql
		.raw(
			`alter table record_estimates
				add column pub_pid text,
				add column pub_install_year smallint,
				add column pub_install_month smallint,
				add column pub_funding_program text,
				add column pub_included boolean,
				add column pub_acres float8 not null generated always as (${ACRES}) stored,
				${generated}`
		)
		.execute(db);
	await sql
		.raw(
			`update record_estimates e set pub_install_year = date_part('year', r.installed_on), pub_install_month = date_part('month', r.installed_on),
				pub_funding_program = r.funding_program, pub_included = r.status = 'installed' or e.state_fy_first is not null
			from records r where r.id = e.record_id`
		)
		.execute(db);
	await sql.raw(FILL).execute(db);
	await sql
		.raw(
			// Every writer of an estimate sets computed_at; filling pub_pid alone does not fire it.
			`create trigger record_estimates_published before insert or update of computed_at, state_fy_first, record_id on record_estimates
				for each row execute function record_estimates_published()`
		)
		.execute(db);
	// A record's own changes reach its estimate through the rollup refresh, which rewrites the estimate row.
	// The rows still waiting for a pid, found without a scan.
	await sql`create index record_estimates_pid_missing_idx on record_estimates (record_id) where pub_pid is null`.execute(db);
}

export async function down(db: Kysely<any>): Promise<void> {
	await sql`drop index if exists record_estimates_pid_missing_idx`.execute(db);
	await sql`drop trigger if exists record_estimates_published on record_estimates`.execute(db);
	await sql`drop function if exists record_estimates_published()`.execute(db);
	await sql
		.raw(
			`alter table record_estimates drop column if exists pub_pid, drop column if exists pub_install_year,
				drop column if exists pub_install_month, drop column if exists pub_funding_program, drop column if exists pub_included,
				drop column if exists pub_acres, drop column if exists pub_n_mean, drop column if exists pub_n_low, drop column if exists pub_n_high,
				drop column if exists pub_p_mean, drop column if exists pub_p_low, drop column if exists pub_p_high`
		)
		.execute(db);
}
