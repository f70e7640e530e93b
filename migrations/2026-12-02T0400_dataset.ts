// Research dataset: frozen releases (their files live in object storage; the row here holds the signed
// manifest), the researcher's opt-out of release mail, and an index for streaming one method's estimates.
// Frozen: never import application code here; later changes go in new, later-dated migrations.
import { sql, type Kysely } from 'kysely';

export async function up(db: Kysely<any>): Promise<void> {
	await db.schema
		.createTable('dataset_releases')
		.addColumn('version', 'text', (c) => c.primaryKey())
		.addColumn('status', 'text', (c) =>
			c
				.notNull()
				.defaultTo('published')
				.check(sql`status in ('published', 'withdrawn')`)
		)
		.addColumn('notes', 'text', (c) => c.notNull().defaultTo(''))
		.addColumn('method_version', 'text', (c) => c.notNull())
		.addColumn('row_count', 'integer', (c) => c.notNull())
		.addColumn('small_cells', 'jsonb', (c) => c.notNull())
		.addColumn('manifest', 'jsonb', (c) => c.notNull())
		.addColumn('manifest_jws', 'text', (c) => c.notNull())
		.addColumn('published_by', 'text', (c) => c.notNull())
		.addColumn('published_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addColumn('withdrawn_reason', 'text')
		.addColumn('withdrawn_at', 'timestamptz')
		.addCheckConstraint('dataset_releases_version_format', sql`version ~ '^[0-9]{4}\\.[1-9][0-9]*$'`)
		.addCheckConstraint('dataset_releases_withdrawn', sql`(status = 'withdrawn') = (withdrawn_reason is not null)`)
		.execute();
	await db.schema
		.alterTable('users')
		.addColumn('release_mail_opt_out', 'boolean', (c) => c.notNull().defaultTo(false))
		.execute();
	await sql`create index record_estimates_method_record_idx on record_estimates (method_version, record_id)`.execute(db);
}

export async function down(db: Kysely<any>): Promise<void> {
	await sql`drop index if exists record_estimates_method_record_idx`.execute(db);
	await db.schema.alterTable('users').dropColumn('release_mail_opt_out').execute();
	await db.schema.dropTable('dataset_releases').execute();
}
