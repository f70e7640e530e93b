// Keeping the numbers honest: the review queue of flagged records (with the managers' decisions) and the
// field verification sampling (draws, their seeds and parameters, and the visits with their outcomes).
// Frozen: never import application code here; later changes go in new, later-dated migrations.
import { sql, type Kysely } from 'kysely';

export async function up(db: Kysely<any>): Promise<void> {
	// Decisions on flagged records, never changed except to note when a returned record got a new version.
	await db.schema
		.createTable('record_reviews')
		.addColumn('id', 'bigserial', (c) => c.primaryKey())
		.addColumn('record_id', 'bigint', (c) => c.notNull().references('records.id'))
		.addColumn('version', 'integer', (c) => c.notNull())
		.addColumn('decision', 'text', (c) => c.notNull().check(sql`decision in ('verified', 'returned')`))
		.addColumn('comment', 'text', (c) => c.notNull().check(sql`length(btrim(comment)) > 0`))
		// The warnings (code|column) of the decided version: a `verified` decision accepts them.
		.addColumn('warning_keys', sql`text[]`, (c) => c.notNull().defaultTo(sql`'{}'::text[]`))
		.addColumn('decided_by_user_id', 'integer', (c) => c.references('users.id'))
		.addColumn('actor', 'text', (c) => c.notNull())
		.addColumn('decided_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		// `returned` only: when a newer version of the record arrived (the district's home page stops showing it).
		.addColumn('cleared_at', 'timestamptz')
		.addColumn('cleared_by_version', 'integer')
		.execute();
	await db.schema.createIndex('record_reviews_record_idx').on('record_reviews').columns(['record_id', 'id']).execute();
	await db.schema
		.createIndex('record_reviews_returned_open_idx')
		.on('record_reviews')
		.column('record_id')
		.where(sql<boolean>`decision = 'returned' and cleared_at is null`)
		.execute();

	// The review state of each record that ever had warnings: one row per record, kept by the records' change hook.
	await db.schema
		.createTable('review_queue')
		.addColumn('record_id', 'bigint', (c) => c.primaryKey().references('records.id'))
		.addColumn('district_id', 'integer', (c) => c.notNull().references('districts.id'))
		.addColumn('version', 'integer', (c) => c.notNull())
		.addColumn('status', 'text', (c) => c.notNull().check(sql`status in ('open', 'verified', 'returned', 'cleared')`))
		.addColumn('opened_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addColumn('updated_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addColumn('last_review_id', 'bigint', (c) => c.references('record_reviews.id'))
		.execute();
	await db.schema.createIndex('review_queue_status_idx').on('review_queue').columns(['status', 'opened_at', 'record_id']).execute();
	await db.schema.createIndex('review_queue_district_idx').on('review_queue').columns(['district_id', 'status']).execute();

	// Records flagged before this migration enter the queue as open, aged from their last change.
	await sql`
		insert into review_queue (record_id, district_id, version, status, opened_at, updated_at)
		select r.id, r.district_id, r.version, 'open', r.updated_at, now() from records r
		where exists (select 1 from record_findings f where f.record_id = r.id and f.version = r.version and f.severity = 'warning')`.execute(db);

	// Field verification: one draw per fiscal year (state FY), with its seed and parameters.
	await db.schema
		.createTable('verification_draws')
		.addColumn('id', 'serial', (c) => c.primaryKey())
		.addColumn('fiscal_year', 'integer', (c) => c.notNull().unique())
		.addColumn('seed', 'text', (c) => c.notNull())
		.addColumn('params', 'jsonb', (c) => c.notNull())
		.addColumn('population', 'integer', (c) => c.notNull())
		.addColumn('sample_size', 'integer', (c) => c.notNull())
		.addColumn('due_on', 'date', (c) => c.notNull())
		.addColumn('drawn_by_user_id', 'integer', (c) => c.references('users.id'))
		.addColumn('actor', 'text', (c) => c.notNull())
		.addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.execute();

	await db.schema
		.createTable('verification_visits')
		.addColumn('id', 'bigserial', (c) => c.primaryKey())
		.addColumn('draw_id', 'integer', (c) => c.notNull().references('verification_draws.id'))
		.addColumn('record_id', 'bigint', (c) => c.notNull().references('records.id'))
		.addColumn('district_id', 'integer', (c) => c.notNull().references('districts.id'))
		// What the draw saw: the stratum, and the two weighting facts.
		.addColumn('edge_of_field', 'boolean', (c) => c.notNull())
		.addColumn('never_visited', 'boolean', (c) => c.notNull())
		.addColumn('due_on', 'date', (c) => c.notNull())
		.addColumn('outcome', 'text', (c) => c.check(sql`outcome in ('in_place_working', 'needs_repair', 'not_found')`))
		.addColumn('visited_on', 'date')
		.addColumn('repair_due_on', 'date')
		.addColumn('note', 'text')
		.addColumn('recorded_by_user_id', 'integer', (c) => c.references('users.id'))
		.addColumn('recorded_by', 'text')
		.addColumn('recorded_at', 'timestamptz')
		// `not_found` only: a manager's confirmation, which withdraws the record's credit from `visited_on`.
		.addColumn('confirmed_by_user_id', 'integer', (c) => c.references('users.id'))
		.addColumn('confirmed_at', 'timestamptz')
		.addUniqueConstraint('verification_visits_draw_record_uq', ['draw_id', 'record_id'])
		.addCheckConstraint('verification_visits_outcome_dates', sql`(outcome is null) = (visited_on is null)`)
		.addCheckConstraint('verification_visits_repair_due', sql`(outcome = 'needs_repair') = (repair_due_on is not null)`)
		.addCheckConstraint('verification_visits_confirm', sql`confirmed_at is null or outcome = 'not_found'`)
		.execute();
	await db.schema.createIndex('verification_visits_record_idx').on('verification_visits').column('record_id').execute();
	await db.schema.createIndex('verification_visits_district_idx').on('verification_visits').columns(['district_id', 'draw_id']).execute();
}

export async function down(db: Kysely<any>): Promise<void> {
	await db.schema.dropTable('verification_visits').execute();
	await db.schema.dropTable('verification_draws').execute();
	await db.schema.dropTable('review_queue').execute();
	await db.schema.dropTable('record_reviews').execute();
}
