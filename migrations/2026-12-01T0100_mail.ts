// The mail outbox: every message the app sends is queued here first; a sender delivers it over SMTP.
import { sql, type Kysely } from 'kysely';

export async function up(db: Kysely<any>): Promise<void> {
	await db.schema
		.createTable('mail_messages')
		.addColumn('id', 'bigserial', (c) => c.primaryKey())
		.addColumn('kind', 'text', (c) => c.notNull())
		.addColumn('to_addresses', sql`text[]`, (c) => c.notNull())
		.addColumn('subject', 'text', (c) => c.notNull())
		.addColumn('text_body', 'text', (c) => c.notNull())
		.addColumn('html_body', 'text')
		.addColumn('status', 'text', (c) =>
			c
				.notNull()
				.defaultTo('queued')
				.check(sql`status in ('queued', 'sent', 'failed')`)
		)
		.addColumn('attempts', 'integer', (c) => c.notNull().defaultTo(0))
		.addColumn('last_error', 'text')
		.addColumn('next_attempt_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.addColumn('sent_at', 'timestamptz')
		.addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
		.execute();
	await db.schema.createIndex('mail_messages_due_idx').on('mail_messages').columns(['status', 'next_attempt_at']).execute();
}

export async function down(db: Kysely<any>): Promise<void> {
	await db.schema.dropTable('mail_messages').execute();
}
