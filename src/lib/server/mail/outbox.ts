// Reading the outbox for the admin page: queued, sent and failed messages, and what the local fake
// SMTP server received for each.
import { sql, type Kysely } from 'kysely';
import type { Database, MailMessage, MailReceived } from '../db/schema';

export const OUTBOX_STATUSES = ['queued', 'sent', 'failed'] as const;
export type OutboxStatus = (typeof OUTBOX_STATUSES)[number];

export interface OutboxListItem {
	id: string;
	kind: string;
	to: string[];
	subject: string;
	status: OutboxStatus;
	attempts: number;
	lastError: string | null;
	createdAt: Date;
	sentAt: Date | null;
	nextAttemptAt: Date;
}

/** Opaque cursor: the last id shown (ids grow with time, newest first). */
export function encodeCursor(id: string): string {
	return Buffer.from(`m:${id}`).toString('base64url');
}

export function decodeCursor(cursor: string | null): string | null {
	if (!cursor) return null;
	const s = Buffer.from(cursor, 'base64url').toString('utf8');
	return /^m:\d{1,19}$/.test(s) ? s.slice(2) : null;
}

export async function listOutbox(
	db: Kysely<Database>,
	opts: { status?: OutboxStatus | null; before?: string | null; limit?: number }
): Promise<{ items: OutboxListItem[]; nextCursor: string | null }> {
	const limit = opts.limit ?? 50;
	let q = db
		.selectFrom('mail_messages')
		.selectAll()
		.orderBy('id', 'desc')
		.limit(limit + 1);
	if (opts.status) q = q.where('status', '=', opts.status);
	if (opts.before) q = q.where('id', '<', opts.before);
	const rows = await q.execute();
	const items = rows.slice(0, limit).map(toListItem);
	return { items, nextCursor: rows.length > limit ? encodeCursor(items[items.length - 1].id) : null };
}

function toListItem(r: MailMessage): OutboxListItem {
	return {
		id: r.id,
		kind: r.kind,
		to: r.to_addresses,
		subject: r.subject,
		status: r.status,
		attempts: r.attempts,
		lastError: r.last_error,
		createdAt: r.created_at,
		sentAt: r.sent_at,
		nextAttemptAt: r.next_attempt_at
	};
}

export async function outboxCounts(db: Kysely<Database>): Promise<Record<OutboxStatus, number>> {
	const rows = await db
		.selectFrom('mail_messages')
		.select(['status', sql<string>`count(*)`.as('n')])
		.groupBy('status')
		.execute();
	const out: Record<OutboxStatus, number> = { queued: 0, sent: 0, failed: 0 };
	for (const r of rows) out[r.status] = Number(r.n);
	return out;
}

export async function getOutboxMessage(
	db: Kysely<Database>,
	id: string
): Promise<{ message: MailMessage; received: MailReceived | null } | null> {
	if (!/^\d{1,19}$/.test(id)) return null;
	const message = await db.selectFrom('mail_messages').selectAll().where('id', '=', id).executeTakeFirst();
	if (!message) return null;
	const received = message.message_id
		? ((await db
				.selectFrom('mail_received')
				.selectAll()
				.where('message_id', '=', message.message_id)
				.orderBy('id', 'desc')
				.executeTakeFirst()) ?? null)
		: null;
	return { message, received };
}

/** Queues a failed message again for a fresh round of attempts (the sender picks it up at once). */
export async function retryMessage(db: Kysely<Database>, id: string): Promise<boolean> {
	if (!/^\d{1,19}$/.test(id)) return false;
	const r = await db
		.updateTable('mail_messages')
		.set({ status: 'queued', attempts: 0, next_attempt_at: sql`now()` as unknown as Date })
		.where('id', '=', id)
		.where('status', '=', 'failed')
		.executeTakeFirst();
	return Number(r.numUpdatedRows) > 0;
}
