// The local fake SMTP server used when SMTP_URL is unset (demo, development, tests): smtp-server on
// 127.0.0.1 at a free port. It delivers nothing; it stores every message it receives in mail_received
// (raw source plus the parsed subject, from, to, text and HTML), where the admin Outbox shows it.
import type { AddressInfo } from 'node:net';
import type { Kysely } from 'kysely';
import { SMTPServer } from 'smtp-server';
import type { Database } from '../db/schema';
import { logger } from '../log';
import { parseMail } from './mime';

export const FAKE_SMTP_MAX_BYTES = 10 * 1024 * 1024;

export interface FakeSmtp {
	host: string;
	port: number;
	close: () => Promise<void>;
}

export async function startFakeSmtp(db: Kysely<Database>): Promise<FakeSmtp> {
	const server = new SMTPServer({
		name: 'runnel-fake-smtp',
		banner: 'Runnel local fake SMTP: messages are stored, never delivered',
		// Plain SMTP on loopback: no TLS certificate to manage, no authentication to configure.
		disabledCommands: ['STARTTLS', 'AUTH'],
		size: FAKE_SMTP_MAX_BYTES,
		rejectOversized: true,
		logger: false,
		closeTimeout: 2_000,
		onData(stream, session, callback) {
			const chunks: Buffer[] = [];
			stream.on('data', (c: Buffer) => chunks.push(c));
			stream.on('error', (e) => callback(e));
			stream.on('end', () => {
				if (stream.sizeExceeded) return callback(Object.assign(new Error('Message too large'), { responseCode: 552 }));
				const raw = Buffer.concat(chunks);
				const parsed = parseMail(raw);
				db.insertInto('mail_received')
					.values({
						message_id: parsed.messageId,
						envelope_from: session.envelope.mailFrom ? session.envelope.mailFrom.address : null,
						envelope_to: session.envelope.rcptTo.map((r) => r.address),
						from_header: parsed.from,
						to_header: parsed.to,
						subject: parsed.subject,
						text_body: parsed.text,
						html_body: parsed.html,
						raw: raw.toString('utf8'),
						size_bytes: raw.length
					})
					.execute()
					.then(
						() => callback(null, 'Stored by the Runnel fake SMTP server'),
						(e: unknown) => {
							logger.error({ err: e }, 'fake SMTP could not store a message');
							// 451: a transient failure, so the sender retries later.
							callback(Object.assign(new Error('Local error in processing; try again later'), { responseCode: 451 }));
						}
					);
			});
		}
	});
	server.on('error', (e) => logger.error({ err: e }, 'fake SMTP server error'));
	await new Promise<void>((resolve, reject) => {
		server.server.once('error', reject);
		server.listen(0, '127.0.0.1', () => resolve());
	});
	const { port } = server.server.address() as AddressInfo;
	return {
		host: '127.0.0.1',
		port,
		close: () => new Promise<void>((resolve) => server.close(() => resolve()))
	};
}
