// Upkeep records: practice events (a media top-up, a structure setting change, a mowing, a repair, an
// inspection) keyed by district + the practice's local id + date + kind, with every change kept as a
// version; and the record type of each batch (practice records or events).
// Frozen: never import application code here; later changes go in new, later-dated migrations.
import { sql, type Kysely } from 'kysely';

export async function up(db: Kysely<any>): Promise<void> {
	await db.schema
		.alterTable('batches')
		.addColumn('record_type', 'text', (c) =>
			c
				.notNull()
				.defaultTo('records')
				.check(sql`record_type in ('records', 'events')`)
		)
		.execute();

	await db.schema
		.createTable('practice_events')
		.addColumn('id', 'bigserial', (c) => c.primaryKey())
		.addColumn('district_id', 'integer', (c) => c.notNull().references('districts.id'))
		.addColumn('record_id', 'bigint', (c) => c.notNull().references('records.id'))
		.addColumn('local_id', 'text', (c) => c.notNull())
		.addColumn('event_on', 'date', (c) => c.notNull())
		.addColumn('kind', 'text', (c) =>
			c.notNull().check(sql`kind in ('media_top_up', 'structure_setting', 'mowing', 'repair', 'inspection')`)
		)
		.addColumn('version', 'integer', (c) => c.notNull())
		.addColumn('stop_board_height_in', sql`numeric(6, 2)`)
		.addColumn('media_added_cu_yd', sql`numeric(10, 2)`)
		.addColumn('data', 'jsonb', (c) => c.notNull())
		.addColumn('content_hash', 'text', (c) => c.notNull())
		.addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addColumn('updated_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addUniqueConstraint('practice_events_identity', ['district_id', 'local_id', 'event_on', 'kind'])
		.execute();
	await db.schema.createIndex('practice_events_record_idx').on('practice_events').columns(['record_id', 'event_on']).execute();
	await db.schema.createIndex('practice_events_kind_idx').on('practice_events').columns(['kind', 'record_id', 'event_on']).execute();

	await db.schema
		.createTable('practice_event_versions')
		.addColumn('event_id', 'bigint', (c) => c.notNull().references('practice_events.id'))
		.addColumn('version', 'integer', (c) => c.notNull())
		.addColumn('data', 'jsonb', (c) => c.notNull())
		.addColumn('changed_fields', sql`text[]`, (c) => c.notNull())
		.addColumn('batch_id', 'bigint', (c) => c.references('batches.id'))
		.addColumn('actor', 'text', (c) => c.notNull())
		.addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addPrimaryKeyConstraint('practice_event_versions_pk', ['event_id', 'version'])
		.execute();
	await db.schema.createIndex('practice_event_versions_batch_idx').on('practice_event_versions').column('batch_id').execute();
}

export async function down(db: Kysely<any>): Promise<void> {
	await db.schema.dropTable('practice_event_versions').ifExists().execute();
	await db.schema.dropTable('practice_events').ifExists().execute();
	await db.schema.alterTable('batches').dropColumn('record_type').execute();
}
