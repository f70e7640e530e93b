// The SMTP transport: nodemailer to SMTP_URL, or, when it is unset, to the in-process fake SMTP
// server (started on first use). One per process.
import nodemailer, { type Transporter } from 'nodemailer';
import { config } from '../config';
import { getDb } from '../db';
import { logger } from '../log';
import { startFakeSmtp, type FakeSmtp } from './fake-smtp';

export interface MailTransport {
	transporter: Transporter;
	/** `relay`: a real SMTP server; `fake`: the local fake server that stores messages in the database. */
	kind: 'relay' | 'fake';
	/** Where mail goes, without credentials (shown to admins on the Outbox page). */
	describe: string;
	close: () => Promise<void>;
}

let current: Promise<MailTransport> | null = null;

const TIMEOUTS = { connectionTimeout: 10_000, greetingTimeout: 10_000, socketTimeout: 30_000 };

/** Where mail goes, without credentials. */
export function describeSmtpUrl(url: string): string {
	try {
		const u = new URL(url);
		return `${u.protocol}//${u.hostname}${u.port ? ':' + u.port : ''}`;
	} catch {
		return 'the SMTP server in SMTP_URL';
	}
}

async function create(): Promise<MailTransport> {
	const url = config.smtpUrl;
	if (url) {
		const transporter = nodemailer.createTransport({ url, ...TIMEOUTS });
		return { transporter, kind: 'relay', describe: describeSmtpUrl(url), close: async () => transporter.close() };
	}
	const fake: FakeSmtp = await startFakeSmtp(getDb());
	const transporter = nodemailer.createTransport({ host: fake.host, port: fake.port, secure: false, ignoreTLS: true, ...TIMEOUTS });
	logger.info({ port: fake.port }, 'SMTP_URL is not set: mail goes to the local fake SMTP server and is kept in the Outbox');
	return {
		transporter,
		kind: 'fake',
		describe: `the local fake SMTP server on ${fake.host}:${fake.port} (SMTP_URL is not set: nothing leaves this machine)`,
		close: async () => {
			transporter.close();
			await fake.close();
		}
	};
}

export function getTransport(): Promise<MailTransport> {
	if (!current) {
		current = create();
		current.catch(() => (current = null));
	}
	return current;
}

/** Where mail goes, if the transport has been set up in this process. */
export async function transportDescription(): Promise<{ kind: 'relay' | 'fake'; describe: string }> {
	const t = await getTransport();
	return { kind: t.kind, describe: t.describe };
}

export async function closeTransport(): Promise<void> {
	const t = current;
	current = null;
	if (t) await (await t.catch(() => null))?.close();
}
