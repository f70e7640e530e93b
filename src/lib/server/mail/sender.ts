// The mail sender: a background service that delivers queued outbox messages (mail_messages) over
// SMTP. Requests only ever queue mail (queue.ts); this loop sends it.
//
// Each run claims due `queued` rows with `FOR UPDATE SKIP LOCKED`, so several app processes can run
// senders against one database without sending a message twice at the same time. Claiming counts the
// attempt and pushes `next_attempt_at` out by a lease, so a process that dies mid-send leaves the
// message to be retried after the lease (delivery is at least once; the Message-ID stays the same).
import { sql, type Kysely } from 'kysely';
import { config } from '../config';
import { getDb } from '../db';
import type { Database, MailMessage } from '../db/schema';
import { logger } from '../log';
import { afterFailure, describeSmtpError } from './retry';
import { closeTransport, getTransport } from './transport';

/** A claimed message is left alone by other senders for this long. */
const LEASE_SECONDS = 300;
const BATCH = 20;

export interface ProcessResult {
	claimed: number;
	sent: number;
	/** Failed this time, queued again for a later attempt. */
	retrying: number;
	/** Failed for good (permanent SMTP error or last attempt). */
	failed: number;
}

function messageDomain(): string {
	const m = /@([A-Za-z0-9.-]+)>?\s*$/.exec(config.mailFrom);
	return m ? m[1] : 'runnel.invalid';
}

async function claim(db: Kysely<Database>, limit: number): Promise<MailMessage[]> {
	return db
		.updateTable('mail_messages')
		.set({
			attempts: sql`attempts + 1`,
			next_attempt_at: sql`now() + make_interval(secs => ${LEASE_SECONDS})`,
			message_id: sql`coalesce(message_id, '<outbox-' || id || '.' || gen_random_uuid() || '@' || ${messageDomain()} || '>')`
		})
		.where('id', 'in', (eb) =>
			eb
				.selectFrom('mail_messages')
				.select('id')
				.where('status', '=', 'queued')
				.where('next_attempt_at', '<=', sql<Date>`now()`)
				.orderBy('next_attempt_at')
				.orderBy('id')
				.limit(limit)
				.forUpdate()
				.skipLocked()
		)
		.returningAll()
		.execute();
}

async function sendOne(db: Kysely<Database>, m: MailMessage): Promise<'sent' | 'retrying' | 'failed'> {
	try {
		const t = await getTransport();
		await t.transporter.sendMail({
			from: config.mailFrom,
			to: m.to_addresses,
			subject: m.subject,
			text: m.text_body,
			...(m.html_body ? { html: m.html_body } : {}),
			messageId: m.message_id ?? undefined,
			headers: { 'Auto-Submitted': 'auto-generated', 'X-Runnel-Mail-Kind': m.kind }
		});
		await db
			.updateTable('mail_messages')
			.set({ status: 'sent', sent_at: sql`now()` as unknown as Date, last_error: null })
			.where('id', '=', m.id)
			.where('status', '=', 'queued')
			.execute();
		logger.info({ mailId: m.id, kind: m.kind, attempt: m.attempts }, 'mail sent');
		return 'sent';
	} catch (err) {
		const next = afterFailure(m.attempts, config.mailMaxAttempts, err, Math.random());
		const lastError = describeSmtpError(err);
		await db
			.updateTable('mail_messages')
			.set(
				next.status === 'failed'
					? { status: 'failed', last_error: lastError }
					: { last_error: lastError, next_attempt_at: sql`now() + make_interval(secs => ${next.retryInSeconds})` as unknown as Date }
			)
			.where('id', '=', m.id)
			.where('status', '=', 'queued')
			.execute();
		logger.warn({ mailId: m.id, kind: m.kind, attempt: m.attempts, error: lastError, next: next.status }, 'mail not sent');
		return next.status === 'failed' ? 'failed' : 'retrying';
	}
}

/**
 * Sends every due queued message once (up to `limit`), and returns what happened. The background
 * service calls this in a loop; tests and scripts call it directly instead of waiting.
 */
export async function processOnce(opts: { limit?: number; db?: Kysely<Database> } = {}): Promise<ProcessResult> {
	const db = opts.db ?? getDb();
	const result: ProcessResult = { claimed: 0, sent: 0, retrying: 0, failed: 0 };
	const messages = await claim(db, opts.limit ?? BATCH);
	result.claimed = messages.length;
	for (const m of messages) result[await sendOne(db, m)]++;
	return result;
}

// --- the background service -------------------------------------------------------------------------
let timer: NodeJS.Timeout | null = null;
let running: Promise<void> | null = null;
let stopping = false;

function schedule(ms: number): void {
	if (stopping) return;
	timer = setTimeout(() => {
		timer = null;
		running = (async () => {
			let again = false;
			try {
				const r = await processOnce();
				again = r.claimed === BATCH; // more may be due: go on at once
			} catch (e) {
				logger.error({ err: e }, 'mail sender run failed');
			}
			running = null;
			schedule(again ? 0 : config.mailPollMs);
		})();
	}, ms);
	timer.unref();
}

export const mailSenderService = {
	name: 'mail-sender',
	async start(): Promise<void> {
		stopping = false;
		// Start the fake SMTP server (or open the relay's transport) now, so it is up before mail is due.
		await getTransport();
		schedule(0);
	},
	async stop(): Promise<void> {
		stopping = true;
		if (timer) clearTimeout(timer);
		timer = null;
		await running;
		await closeTransport();
	}
};
