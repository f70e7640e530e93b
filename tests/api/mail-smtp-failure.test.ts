// When the SMTP server cannot be reached, a message stays queued with its attempts and error, is
// retried with backoff, and ends `failed` after the last attempt; a permanent refusal (5yz) fails at
// once. Runs in its own database (so no other test's mail is touched) with SMTP_URL pointing at a
// port nobody listens on.
import net from 'node:net';
import { SMTPServer } from 'smtp-server';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createOwnDatabase } from '../helpers/db';

type Sender = typeof import('$lib/server/mail/sender');
type Db = typeof import('$lib/server/db');
type Queue = typeof import('$lib/server/mail/queue');
type Transport = typeof import('$lib/server/mail/transport');

const mainUrl = process.env.DATABASE_URL!;
let own: Awaited<ReturnType<typeof createOwnDatabase>>;
let sender: Sender;
let dbm: Db;
let queue: Queue;
let transport: Transport;

async function closedPort(): Promise<number> {
	const srv = net.createServer();
	await new Promise<void>((r) => srv.listen(0, '127.0.0.1', r));
	const port = (srv.address() as net.AddressInfo).port;
	await new Promise((r) => srv.close(r));
	return port;
}

beforeAll(async () => {
	own = await createOwnDatabase('runnel_mailfail');
	process.env.DATABASE_URL = own.url;
	process.env.SMTP_URL = `smtp://127.0.0.1:${await closedPort()}`;
	process.env.MAIL_MAX_ATTEMPTS = '3';
	dbm = await import('$lib/server/db');
	sender = await import('$lib/server/mail/sender');
	queue = await import('$lib/server/mail/queue');
	transport = await import('$lib/server/mail/transport');
});

afterAll(async () => {
	await transport?.closeTransport();
	await dbm?.closeDb();
	process.env.DATABASE_URL = mainUrl;
	await own?.drop();
});

const row = (id: string) => dbm.getDb().selectFrom('mail_messages').selectAll().where('id', '=', id).executeTakeFirstOrThrow();
const makeDue = (id: string) =>
	dbm
		.getDb()
		.updateTable('mail_messages')
		.set({ next_attempt_at: new Date(Date.now() - 1000) })
		.where('id', '=', id)
		.execute();
const secondsUntil = (d: Date) => (d.getTime() - Date.now()) / 1000;

describe('SMTP server unreachable', () => {
	it('keeps the message queued with attempts, error and a growing wait, then marks it failed after the last attempt', async () => {
		const id = await queue.queueMail(dbm.getDb(), { kind: 'other', to: ['someone@example.org'], subject: 'Will not arrive', text: 'x' });

		expect(await sender.processOnce()).toEqual({ claimed: 1, sent: 0, retrying: 1, failed: 0 });
		let m = await row(id);
		expect(m.status).toBe('queued');
		expect(m.attempts).toBe(1);
		expect(m.last_error).toMatch(/ECONNREFUSED/);
		expect(secondsUntil(m.next_attempt_at)).toBeGreaterThan(25); // 30 s ± 10 %
		expect(secondsUntil(m.next_attempt_at)).toBeLessThan(34);
		const messageId = m.message_id;
		expect(messageId).toMatch(/^<outbox-/);

		// Not due yet: nothing to do.
		expect((await sender.processOnce()).claimed).toBe(0);

		await makeDue(id);
		expect(await sender.processOnce()).toEqual({ claimed: 1, sent: 0, retrying: 1, failed: 0 });
		m = await row(id);
		expect(m.attempts).toBe(2);
		expect(m.status).toBe('queued');
		expect(secondsUntil(m.next_attempt_at)).toBeGreaterThan(100); // 120 s ± 10 %
		expect(secondsUntil(m.next_attempt_at)).toBeLessThan(135);
		expect(m.message_id).toBe(messageId); // the same Message-ID on every attempt

		await makeDue(id);
		expect(await sender.processOnce()).toEqual({ claimed: 1, sent: 0, retrying: 0, failed: 1 });
		m = await row(id);
		expect(m.status).toBe('failed');
		expect(m.attempts).toBe(3);
		expect(m.last_error).toMatch(/ECONNREFUSED/);
		expect(m.sent_at).toBeNull();

		// A failed message is never picked up again by itself.
		await makeDue(id);
		expect((await sender.processOnce()).claimed).toBe(0);
	});
});

describe('SMTP server refuses the recipient (550)', () => {
	it('fails at once, with the server’s answer as the error', async () => {
		const refusing = new SMTPServer({
			disabledCommands: ['STARTTLS', 'AUTH'],
			logger: false,
			onRcptTo(address, _session, callback) {
				callback(Object.assign(new Error(`<${address.address}>: mailbox unavailable`), { responseCode: 550 }));
			}
		});
		await new Promise<void>((r) => refusing.listen(0, '127.0.0.1', () => r()));
		try {
			await transport.closeTransport();
			process.env.SMTP_URL = `smtp://127.0.0.1:${(refusing.server.address() as net.AddressInfo).port}`;
			const id = await queue.queueMail(dbm.getDb(), { kind: 'other', to: ['gone@example.org'], subject: 'Refused', text: 'x' });
			expect(await sender.processOnce()).toEqual({ claimed: 1, sent: 0, retrying: 0, failed: 1 });
			const m = await row(id);
			expect(m.status).toBe('failed');
			expect(m.attempts).toBe(1);
			expect(m.last_error).toMatch(/^SMTP 550: .*mailbox unavailable/);
		} finally {
			await transport.closeTransport();
			await new Promise<void>((r) => refusing.close(() => r()));
		}
	});
});
