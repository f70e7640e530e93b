// Mail delivery, signing keys and OAuth clients:
// - mail_messages gets the Message-ID the sender puts on a message (the same on every retry);
// - mail_received: every message the in-process fake SMTP server receives (demo, dev, tests);
// - signing_keys: the asymmetric key pairs that sign access tokens and release manifests;
// - oauth_clients: client-credentials clients (RFC 6749 §4.4) registered for a district.
import { sql, type Kysely } from 'kysely';

export async function up(db: Kysely<any>): Promise<void> {
	await db.schema.alterTable('mail_messages').addColumn('message_id', 'text').execute();
	await db.schema.createIndex('mail_messages_message_id_idx').on('mail_messages').column('message_id').execute();
	await db.schema.createIndex('mail_messages_created_idx').on('mail_messages').columns(['created_at', 'id']).execute();

	await db.schema
		.createTable('mail_received')
		.addColumn('id', 'bigserial', (c) => c.primaryKey())
		.addColumn('message_id', 'text')
		.addColumn('envelope_from', 'text')
		.addColumn('envelope_to', sql`text[]`, (c) => c.notNull())
		.addColumn('from_header', 'text')
		.addColumn('to_header', 'text')
		.addColumn('subject', 'text')
		.addColumn('text_body', 'text')
		.addColumn('html_body', 'text')
		.addColumn('raw', 'text', (c) => c.notNull())
		.addColumn('size_bytes', 'integer', (c) => c.notNull())
		.addColumn('received_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.execute();
	await db.schema.createIndex('mail_received_message_id_idx').on('mail_received').column('message_id').execute();

	await db.schema
		.createTable('signing_keys')
		.addColumn('kid', 'text', (c) => c.primaryKey())
		.addColumn('alg', 'text', (c) => c.notNull())
		.addColumn('public_jwk', 'jsonb', (c) => c.notNull())
		// The private JWK as a compact JWE (dir + A256GCM) under RUNNEL_KEY_SECRET, or the plain JWK
		// (prefixed `plain:`) when no secret is configured. Never leaves the server.
		.addColumn('private_jwk', 'text', (c) => c.notNull())
		.addColumn('status', 'text', (c) => c.notNull().check(sql`status in ('active', 'previous', 'retired')`))
		.addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addColumn('rotated_at', 'timestamptz')
		.addColumn('retired_at', 'timestamptz')
		.execute();
	// At most one key signs at a time.
	await sql`create unique index signing_keys_one_active on signing_keys (status) where status = 'active'`.execute(db);

	await db.schema
		.createTable('oauth_clients')
		.addColumn('id', 'serial', (c) => c.primaryKey())
		.addColumn('client_id', 'text', (c) => c.notNull().unique())
		.addColumn('name', 'text', (c) => c.notNull())
		.addColumn('district_id', 'integer', (c) => c.notNull().references('districts.id'))
		.addColumn('scopes', sql`text[]`, (c) => c.notNull())
		.addColumn('secret_hash', 'text', (c) => c.notNull())
		.addColumn('created_by', 'integer', (c) => c.references('users.id'))
		.addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addColumn('last_used_at', 'timestamptz')
		.addColumn('revoked_at', 'timestamptz')
		.execute();
}

export async function down(db: Kysely<any>): Promise<void> {
	await db.schema.dropTable('oauth_clients').execute();
	await db.schema.dropTable('signing_keys').execute();
	await db.schema.dropTable('mail_received').execute();
	await db.schema.dropIndex('mail_messages_created_idx').execute();
	await db.schema.dropIndex('mail_messages_message_id_idx').execute();
	await db.schema.alterTable('mail_messages').dropColumn('message_id').execute();
}
