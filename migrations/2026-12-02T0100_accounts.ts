// Accounts: server-side sessions, one-time e-mail links (invitations, password resets), sign-in
// throttling and the audit log. Frozen: never import application code here.
import { sql, type Kysely } from 'kysely';

export async function up(db: Kysely<any>): Promise<void> {
	await db.schema.alterTable('users').addColumn('last_sign_in_at', 'timestamptz').execute();

	// Only a SHA-256 hash of the session token is stored; the token itself lives in the cookie.
	await db.schema
		.createTable('sessions')
		.addColumn('id', 'bigserial', (c) => c.primaryKey())
		.addColumn('user_id', 'integer', (c) => c.notNull().references('users.id').onDelete('cascade'))
		.addColumn('token_hash', 'text', (c) => c.notNull().unique())
		.addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addColumn('last_seen_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addColumn('expires_at', 'timestamptz', (c) => c.notNull())
		.addColumn('ip', 'text')
		.addColumn('user_agent', 'text')
		.execute();
	await db.schema.createIndex('sessions_user_idx').on('sessions').column('user_id').execute();
	await db.schema.createIndex('sessions_expires_idx').on('sessions').column('expires_at').execute();

	// Invitations and password resets: single-use, expiring, stored hashed.
	await db.schema
		.createTable('account_links')
		.addColumn('id', 'bigserial', (c) => c.primaryKey())
		.addColumn('user_id', 'integer', (c) => c.notNull().references('users.id').onDelete('cascade'))
		.addColumn('purpose', 'text', (c) => c.notNull().check(sql`purpose in ('invitation', 'password-reset')`))
		.addColumn('token_hash', 'text', (c) => c.notNull().unique())
		.addColumn('expires_at', 'timestamptz', (c) => c.notNull())
		.addColumn('used_at', 'timestamptz')
		.addColumn('created_by', 'integer', (c) => c.references('users.id').onDelete('set null'))
		.addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.execute();
	await db.schema.createIndex('account_links_user_idx').on('account_links').columns(['user_id', 'purpose']).execute();

	// Failed sign-ins per key (`account:<e-mail>` or `ip:<address>`); an attempt is counted when it
	// starts and taken back when it succeeds.
	await db.schema
		.createTable('sign_in_throttle')
		.addColumn('key', 'text', (c) => c.primaryKey())
		.addColumn('failures', 'integer', (c) => c.notNull().defaultTo(0))
		.addColumn('last_failure_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.execute();

	await db.schema
		.createTable('audit_log')
		.addColumn('id', 'bigserial', (c) => c.primaryKey())
		.addColumn('at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addColumn('action', 'text', (c) => c.notNull())
		.addColumn('actor', 'text', (c) => c.notNull())
		.addColumn('actor_user_id', 'integer', (c) => c.references('users.id').onDelete('set null'))
		.addColumn('subject_user_id', 'integer', (c) => c.references('users.id').onDelete('set null'))
		.addColumn('ip', 'text')
		.addColumn('detail', 'jsonb', (c) => c.notNull().defaultTo(sql`'{}'::jsonb`))
		.execute();
	await db.schema.createIndex('audit_log_action_idx').on('audit_log').columns(['action', 'id']).execute();
	await db.schema.createIndex('audit_log_actor_idx').on('audit_log').columns(['actor_user_id', 'id']).execute();
	await db.schema.createIndex('audit_log_subject_idx').on('audit_log').columns(['subject_user_id', 'id']).execute();
}

export async function down(db: Kysely<any>): Promise<void> {
	for (const t of ['audit_log', 'sign_in_throttle', 'account_links', 'sessions']) await db.schema.dropTable(t).ifExists().execute();
	await db.schema.alterTable('users').dropColumn('last_sign_in_at').execute();
}
