// Intake: batches (one upload each), their findings, idempotency keys, and the current warnings of each
// record (for the review queue). Frozen: never import application code here.
import { sql, type Kysely } from 'kysely';

export async function up(db: Kysely<any>): Promise<void> {
	await db.schema
		.createTable('batches')
		.addColumn('id', 'bigserial', (c) => c.primaryKey())
		.addColumn('district_id', 'integer', (c) => c.notNull().references('districts.id'))
		.addColumn('mode', 'text', (c) => c.notNull().check(sql`mode in ('check', 'all', 'valid')`))
		.addColumn('status', 'text', (c) =>
			c
				.notNull()
				.defaultTo('received')
				.check(sql`status in ('received', 'checking', 'done', 'failed')`)
		)
		.addColumn('format', 'text', (c) => c.notNull().check(sql`format in ('csv', 'xlsx', 'ndjson', 'json')`))
		.addColumn('content_type', 'text', (c) => c.notNull())
		.addColumn('file_name', 'text')
		.addColumn('sheet', 'text')
		.addColumn('size_bytes', 'bigint', (c) => c.notNull())
		.addColumn('sha256', 'char(64)', (c) => c.notNull())
		.addColumn('archive_key', 'text', (c) => c.notNull())
		.addColumn('schema_version', 'text', (c) => c.notNull())
		.addColumn('encoding', 'text')
		.addColumn('actor', 'text', (c) => c.notNull())
		.addColumn('user_id', 'integer', (c) => c.references('users.id'))
		// Progress and counts. `rows_done` moves while the worker reads; the counts are final when status is done.
		.addColumn('rows_done', 'integer', (c) => c.notNull().defaultTo(0))
		.addColumn('rows', 'integer', (c) => c.notNull().defaultTo(0))
		.addColumn('accepted', 'integer', (c) => c.notNull().defaultTo(0))
		.addColumn('rejected', 'integer', (c) => c.notNull().defaultTo(0))
		.addColumn('errors', 'integer', (c) => c.notNull().defaultTo(0))
		.addColumn('warnings', 'integer', (c) => c.notNull().defaultTo(0))
		.addColumn('created', 'integer', (c) => c.notNull().defaultTo(0))
		.addColumn('updated', 'integer', (c) => c.notNull().defaultTo(0))
		.addColumn('unchanged', 'integer', (c) => c.notNull().defaultTo(0))
		.addColumn('withdrawn', 'integer', (c) => c.notNull().defaultTo(0))
		.addColumn('findings_by_code', 'jsonb', (c) => c.notNull().defaultTo(sql`'{}'::jsonb`))
		.addColumn('findings_by_column', 'jsonb', (c) => c.notNull().defaultTo(sql`'{}'::jsonb`))
		// Findings beyond the stored cap are counted above but not listed; this says how many were left out.
		.addColumn('findings_omitted', 'integer', (c) => c.notNull().defaultTo(0))
		.addColumn('failure', 'text')
		.addColumn('attempts', 'integer', (c) => c.notNull().defaultTo(0))
		.addColumn('heartbeat_at', 'timestamptz')
		.addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addColumn('started_at', 'timestamptz')
		.addColumn('finished_at', 'timestamptz')
		/** When the record writes of an `all`/`valid` batch committed; null for `check` and for nothing written. */
		.addColumn('committed_at', 'timestamptz')
		.execute();
	await db.schema.createIndex('batches_district_idx').on('batches').columns(['district_id', 'id']).execute();
	await db.schema.createIndex('batches_status_idx').on('batches').columns(['status', 'heartbeat_at']).execute();

	await db.schema
		.createTable('batch_findings')
		.addColumn('batch_id', 'bigint', (c) => c.notNull().references('batches.id').onDelete('cascade'))
		.addColumn('seq', 'integer', (c) => c.notNull())
		.addColumn('code', 'text', (c) => c.notNull())
		.addColumn('severity', 'text', (c) => c.notNull().check(sql`severity in ('error', 'warning')`))
		.addColumn('row', 'integer')
		.addColumn('column', 'text')
		.addColumn('column_number', 'integer')
		.addColumn('cell', 'text')
		.addColumn('value', 'text')
		.addColumn('rule', 'jsonb')
		.addColumn('message', 'text', (c) => c.notNull())
		.addPrimaryKeyConstraint('batch_findings_pk', ['batch_id', 'seq'])
		.execute();

	// Idempotency-Key (IETF httpapi draft): one row per caller and key, claimed inside the batch's transaction.
	await db.schema
		.createTable('idempotency_keys')
		.addColumn('scope', 'text', (c) => c.notNull())
		.addColumn('key', 'text', (c) => c.notNull())
		.addColumn('fingerprint', 'text', (c) => c.notNull())
		.addColumn('batch_id', 'bigint', (c) => c.references('batches.id').onDelete('cascade'))
		.addColumn('response_status', 'integer', (c) => c.notNull())
		.addColumn('response_location', 'text')
		.addColumn('response_body', 'jsonb', (c) => c.notNull())
		.addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addColumn('expires_at', 'timestamptz', (c) => c.notNull())
		.addPrimaryKeyConstraint('idempotency_keys_pk', ['scope', 'key'])
		.execute();
	await db.schema.createIndex('idempotency_keys_expires_idx').on('idempotency_keys').column('expires_at').execute();

	// The warnings each record's current version carries (replaced when a new version is written).
	await db.schema
		.createTable('record_findings')
		.addColumn('record_id', 'bigint', (c) => c.notNull().references('records.id'))
		.addColumn('version', 'integer', (c) => c.notNull())
		.addColumn('code', 'text', (c) => c.notNull())
		.addColumn('severity', 'text', (c) => c.notNull().check(sql`severity in ('error', 'warning')`))
		.addColumn('column', 'text')
		.addColumn('value', 'text')
		.addColumn('rule', 'jsonb')
		.addColumn('message', 'text', (c) => c.notNull())
		.addColumn('batch_id', 'bigint', (c) => c.references('batches.id'))
		.addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.execute();
	await db.schema.createIndex('record_findings_record_idx').on('record_findings').columns(['record_id', 'version']).execute();
	await db.schema.createIndex('record_findings_code_idx').on('record_findings').column('code').execute();

	await db.schema
		.alterTable('record_versions')
		.addForeignKeyConstraint('record_versions_batch_fk', ['batch_id'], 'batches', ['id'])
		.execute();
	await db.schema.createIndex('record_versions_batch_idx').on('record_versions').column('batch_id').execute();
	await db.schema.createIndex('records_status_idx').on('records').columns(['district_id', 'status', 'installed_on']).execute();
}

export async function down(db: Kysely<any>): Promise<void> {
	await db.schema.dropIndex('records_status_idx').ifExists().execute();
	await db.schema.dropIndex('record_versions_batch_idx').ifExists().execute();
	await db.schema.alterTable('record_versions').dropConstraint('record_versions_batch_fk').execute();
	for (const t of ['record_findings', 'idempotency_keys', 'batch_findings', 'batches']) {
		await db.schema.dropTable(t).ifExists().execute();
	}
}
