// Queues a message in the outbox (mail_messages). Sending never blocks a request: the mail sender
// (src/lib/server/mail/) delivers queued messages over SMTP in the background and retries failures.
import type { Kysely, Transaction } from 'kysely';
import type { Database } from '../db/schema';

export type MailKind = 'invitation' | 'password-reset' | 'batch-result' | 'record-returned' | 'release-published' | 'other';

export interface OutgoingMail {
	kind: MailKind;
	to: string[];
	subject: string;
	text: string;
	html?: string;
}

export async function queueMail(db: Kysely<Database> | Transaction<Database>, mail: OutgoingMail): Promise<string> {
	if (mail.to.length === 0) throw new Error('queueMail: no recipients');
	const row = await db
		.insertInto('mail_messages')
		.values({ kind: mail.kind, to_addresses: mail.to, subject: mail.subject, text_body: mail.text, html_body: mail.html ?? null })
		.returning('id')
		.executeTakeFirstOrThrow();
	return row.id;
}
