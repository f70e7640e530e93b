// Foundation: reference data, districts, people, API tokens and practice records with versions.
// Frozen: never import application code here; later changes go in new, later-dated migrations.
import { sql, type Kysely } from 'kysely';

export async function up(db: Kysely<any>): Promise<void> {
	await db.schema
		.createTable('settings')
		.addColumn('key', 'text', (c) => c.primaryKey())
		.addColumn('value', 'jsonb', (c) => c.notNull())
		.addColumn('updated_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.execute();

	await db.schema
		.createTable('counties')
		.addColumn('fips', 'char(5)', (c) => c.primaryKey())
		.addColumn('state_fips', 'char(2)', (c) => c.notNull())
		.addColumn('name', 'text', (c) => c.notNull())
		.execute();
	await db.schema.createIndex('counties_state_idx').on('counties').column('state_fips').execute();

	await db.schema
		.createTable('practices')
		.addColumn('code', 'text', (c) => c.primaryKey())
		.addColumn('name', 'text', (c) => c.notNull())
		.addColumn('category', 'text', (c) => c.notNull().check(sql`category in ('in_field', 'edge_of_field')`))
		.addColumn('credited_basis', 'text', (c) => c.notNull().check(sql`credited_basis in ('extent_acres', 'drainage_area_acres')`))
		.addColumn('unit', 'text', (c) => c.notNull())
		.addColumn('lifespan_years', 'integer', (c) => c.notNull().check(sql`lifespan_years > 0`))
		.addColumn('source_note', 'text', (c) => c.notNull())
		.execute();

	await db.schema
		.createTable('districts')
		.addColumn('id', 'serial', (c) => c.primaryKey())
		.addColumn('code', 'text', (c) => c.notNull().unique())
		.addColumn('name', 'text', (c) => c.notNull())
		.addColumn('region', 'text', (c) => c.notNull())
		.addColumn('contacts', 'jsonb', (c) => c.notNull().defaultTo(sql`'[]'::jsonb`))
		.addColumn('notify_on_rejected', 'boolean', (c) => c.notNull().defaultTo(true))
		.addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.execute();

	await db.schema
		.createTable('district_counties')
		.addColumn('district_id', 'integer', (c) => c.notNull().references('districts.id').onDelete('cascade'))
		.addColumn('county_fips', 'char(5)', (c) => c.notNull().references('counties.fips'))
		.addPrimaryKeyConstraint('district_counties_pk', ['district_id', 'county_fips'])
		.execute();

	await db.schema
		.createTable('users')
		.addColumn('id', 'serial', (c) => c.primaryKey())
		.addColumn('email', 'text', (c) => c.notNull())
		.addColumn('name', 'text', (c) => c.notNull())
		.addColumn('role', 'text', (c) => c.notNull().check(sql`role in ('admin', 'manager', 'district', 'researcher')`))
		.addColumn('district_id', 'integer', (c) => c.references('districts.id'))
		.addColumn('password_hash', 'text')
		.addColumn('active', 'boolean', (c) => c.notNull().defaultTo(true))
		.addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addCheckConstraint('users_district_role', sql`(role = 'district') = (district_id is not null)`)
		.execute();
	await sql`create unique index users_email_idx on users (lower(email))`.execute(db);

	await db.schema
		.createTable('api_tokens')
		.addColumn('id', 'serial', (c) => c.primaryKey())
		.addColumn('user_id', 'integer', (c) => c.notNull().references('users.id').onDelete('cascade'))
		.addColumn('name', 'text', (c) => c.notNull())
		.addColumn('token_hash', 'text', (c) => c.notNull().unique())
		.addColumn('display_prefix', 'text', (c) => c.notNull())
		.addColumn('scopes', sql`text[]`, (c) => c.notNull())
		.addColumn('expires_at', 'timestamptz')
		.addColumn('last_used_at', 'timestamptz')
		.addColumn('revoked_at', 'timestamptz')
		.addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.execute();

	await db.schema
		.createTable('records')
		.addColumn('id', 'bigserial', (c) => c.primaryKey())
		.addColumn('district_id', 'integer', (c) => c.notNull().references('districts.id'))
		.addColumn('local_id', 'text', (c) => c.notNull())
		.addColumn('version', 'integer', (c) => c.notNull())
		.addColumn('practice_code', 'text', (c) => c.notNull().references('practices.code'))
		.addColumn('county_fips', 'char(5)', (c) => c.notNull().references('counties.fips'))
		.addColumn('installed_on', 'date', (c) => c.notNull())
		.addColumn('status', 'text', (c) => c.notNull().check(sql`status in ('installed', 'withdrawn')`))
		.addColumn('withdrawn_on', 'date')
		.addColumn('extent_acres', sql`numeric(12, 2)`)
		.addColumn('drainage_area_acres', sql`numeric(12, 2)`)
		.addColumn('field_id', 'text')
		.addColumn('operation_id', 'text')
		.addColumn('huc12', 'char(12)')
		.addColumn('cost_total_usd', sql`numeric(14, 2)`)
		.addColumn('cost_share_usd', sql`numeric(14, 2)`)
		.addColumn('funding_program', 'text')
		.addColumn('data', 'jsonb', (c) => c.notNull())
		.addColumn('content_hash', 'text', (c) => c.notNull())
		.addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addColumn('updated_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addUniqueConstraint('records_district_local_id', ['district_id', 'local_id'])
		.execute();
	await db.schema.createIndex('records_county_idx').on('records').columns(['county_fips', 'installed_on']).execute();
	await db.schema.createIndex('records_practice_idx').on('records').column('practice_code').execute();
	await db.schema.createIndex('records_field_idx').on('records').columns(['district_id', 'field_id']).execute();

	await db.schema
		.createTable('record_versions')
		.addColumn('record_id', 'bigint', (c) => c.notNull().references('records.id'))
		.addColumn('version', 'integer', (c) => c.notNull())
		.addColumn('data', 'jsonb', (c) => c.notNull())
		.addColumn('changed_fields', sql`text[]`, (c) => c.notNull())
		.addColumn('batch_id', 'bigint')
		.addColumn('actor', 'text', (c) => c.notNull())
		.addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addPrimaryKeyConstraint('record_versions_pk', ['record_id', 'version'])
		.execute();
}

export async function down(db: Kysely<any>): Promise<void> {
	for (const t of [
		'record_versions',
		'records',
		'api_tokens',
		'users',
		'district_counties',
		'districts',
		'practices',
		'counties',
		'settings'
	]) {
		await db.schema.dropTable(t).ifExists().execute();
	}
}
