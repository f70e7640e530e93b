// Reduction methods: versioned, cited efficiency tables (the whole method document as JSON, frozen once
// stored). Which version is active lives in `settings` under `active_method_version` (set by the seed).
import { sql, type Kysely } from 'kysely';

export async function up(db: Kysely<any>): Promise<void> {
	await db.schema
		.createTable('reduction_methods')
		.addColumn('id', 'serial', (c) => c.primaryKey())
		.addColumn('version', 'text', (c) => c.notNull().unique())
		.addColumn('label', 'text', (c) => c.notNull())
		.addColumn('method', 'jsonb', (c) => c.notNull())
		.addColumn('created_by', 'text', (c) => c.notNull())
		.addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addCheckConstraint('reduction_methods_version_matches', sql`method ->> 'version' = version`)
		.execute();
}

export async function down(db: Kysely<any>): Promise<void> {
	await db.schema.dropTable('reduction_methods').ifExists().execute();
	await db.deleteFrom('settings').where('key', '=', 'active_method_version').execute();
}
