// Mail: queued messages reach the local fake SMTP server (which stores them), several senders never
// deliver one message twice, and admins (only admins) read the outbox, including failures.
import { sql } from 'kysely';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, getDb } from '$lib/server/db';
import { queueMail } from '$lib/server/mail/queue';
import { processOnce } from '$lib/server/mail/sender';
import { composeMail } from '$lib/server/mail/template';
import { closeTransport } from '$lib/server/mail/transport';
import { appHandler, bearer, DEMO_TOKENS } from '../helpers/app';

type Handler = Awaited<ReturnType<typeof appHandler>>;
let app: Handler;
const ORIGIN = () => process.env.ORIGIN!;

beforeAll(async () => {
	app = await appHandler(); // the built app starts its own sender and fake SMTP server too
});
afterAll(async () => {
	await closeTransport();
	await closeDb();
});

/** Runs the sender until the message is no longer queued (another process's sender may take it first). */
async function deliver(id: string) {
	for (let i = 0; i < 50; i++) {
		await processOnce();
		const row = await getDb().selectFrom('mail_messages').selectAll().where('id', '=', id).executeTakeFirstOrThrow();
		if (row.status !== 'queued') return row;
		await new Promise((r) => setTimeout(r, 100));
	}
	throw new Error(`message ${id} still queued`);
}

describe('sending through the fake SMTP server', () => {
	it('delivers a queued message once, and the fake server stores subject, from, to, text and HTML', async () => {
		const subject = `Your password reset link ✓ ${Date.now()}`;
		const id = await queueMail(
			getDb(),
			composeMail('password-reset', ['mara.quillfeather@bluestem.example.org'], subject, {
				heading: 'Reset your password',
				paragraphs: ['Use the link below within an hour.'],
				action: { label: 'Choose a new password', url: 'https://hub.example.org/reset?t=abc' }
			})
		);
		const row = await deliver(id);
		expect(row.status).toBe('sent');
		expect(row.attempts).toBe(1);
		expect(row.sent_at).toBeInstanceOf(Date);
		expect(row.message_id).toMatch(/^<outbox-\d+\.[0-9a-f-]+@runnel\.test>$/);

		const got = await getDb().selectFrom('mail_received').selectAll().where('message_id', '=', row.message_id).execute();
		expect(got).toHaveLength(1);
		expect(got[0].subject).toBe(subject);
		expect(got[0].envelope_to).toEqual(['mara.quillfeather@bluestem.example.org']);
		expect(got[0].envelope_from).toBe('no-reply@runnel.test');
		expect(got[0].from_header).toBe('Runnel <no-reply@runnel.test>');
		expect(got[0].to_header).toBe('mara.quillfeather@bluestem.example.org');
		expect(got[0].text_body).toContain('https://hub.example.org/reset?t=abc');
		expect(got[0].html_body).toContain('href="https://hub.example.org/reset?t=abc"');
		expect(got[0].raw).toMatch(/^Auto-Submitted: auto-generated$/m);
		expect(got[0].size_bytes).toBeGreaterThan(500);
	});

	it('concurrent senders (FOR UPDATE SKIP LOCKED) deliver each of 15 messages exactly once', async () => {
		const ids: string[] = [];
		for (let i = 0; i < 15; i++) {
			ids.push(await queueMail(getDb(), { kind: 'other', to: [`person${i}@example.org`], subject: `Concurrent ${i}`, text: `Body ${i}` }));
		}
		const results = await Promise.all([
			processOnce({ limit: 5 }),
			processOnce({ limit: 5 }),
			processOnce({ limit: 5 }),
			processOnce({ limit: 5 })
		]);
		for (const id of ids) await deliver(id);
		// No message was claimed by two of our runs.
		expect(results.reduce((n, r) => n + r.claimed, 0)).toBeLessThanOrEqual(15);
		const rows = await getDb()
			.selectFrom('mail_messages')
			.select(['id', 'status', 'attempts', 'message_id'])
			.where('id', 'in', ids)
			.execute();
		expect(rows.every((r) => r.status === 'sent' && r.attempts === 1)).toBe(true);
		const received = await getDb()
			.selectFrom('mail_received')
			.select(['message_id', sql<string>`count(*)`.as('n')])
			.where(
				'message_id',
				'in',
				rows.map((r) => r.message_id!)
			)
			.groupBy('message_id')
			.execute();
		expect(received).toHaveLength(15);
		expect(received.every((r) => Number(r.n) === 1)).toBe(true);
	});
});

describe('Outbox pages', () => {
	let sentId: string;
	let failedId: string;

	beforeAll(async () => {
		sentId = await queueMail(
			getDb(),
			composeMail('invitation', ['newcomer@kettleprairie.example.org'], 'You are invited to Runnel', {
				heading: 'You are invited to Runnel',
				paragraphs: ['Kettle Prairie Conservation District asked us to set up your account.'],
				action: { label: 'Set your password', url: 'https://hub.example.org/invite?t=xyz' }
			})
		);
		await deliver(sentId);
		const failed = await getDb()
			.insertInto('mail_messages')
			.values({
				kind: 'batch-result',
				to_addresses: ['nobody@unreachable.example.org'],
				subject: 'Batch 7 results',
				text_body: 'Batch 7: 12 rows accepted.',
				html_body: null,
				status: 'failed',
				attempts: 6,
				last_error: 'SMTP 550: 550 5.1.1 mailbox unavailable'
			})
			.returning('id')
			.executeTakeFirstOrThrow();
		failedId = failed.id;
	});

	it('admins see the list with kind, recipient, subject, status, attempts and failures', async () => {
		const res = await request(app).get('/admin/outbox').set(bearer(DEMO_TOKENS.admin));
		expect(res.status).toBe(200);
		expect(res.text).toContain('You are invited to Runnel');
		expect(res.text).toContain('newcomer@kettleprairie.example.org');
		expect(res.text).toContain('Batch 7 results');
		expect(res.text).toContain('SMTP 550: 550 5.1.1 mailbox unavailable');
		expect(res.text).toMatch(/\d+ messages? (was|were) not delivered/);

		const failedOnly = await request(app).get('/admin/outbox?status=failed').set(bearer(DEMO_TOKENS.admin));
		expect(failedOnly.text).toContain('Batch 7 results');
		expect(failedOnly.text).not.toContain('You are invited to Runnel');
	});

	it('admins open a message: HTML in a sandboxed frame, the text, and the raw source as received', async () => {
		const res = await request(app).get(`/admin/outbox/${sentId}`).set(bearer(DEMO_TOKENS.admin));
		expect(res.status).toBe(200);
		const iframe = res.text.slice(res.text.indexOf('<iframe '), res.text.indexOf('</iframe>'));
		expect(iframe).toContain('sandbox="allow-popups allow-popups-to-escape-sandbox"');
		expect(iframe).toMatch(/srcdoc="[^"]*&lt;base target=&quot;_blank&quot;[^"]*Set your password/);
		expect(iframe).not.toContain('allow-scripts');
		expect(res.text).toContain('Kettle Prairie Conservation District asked us to set up your account.');
		expect(res.text).toContain('by the local fake SMTP server');
		expect(res.text).toContain('Raw message source');
	});

	it('a failed message says so, with its error, and can be queued again', async () => {
		const page = await request(app).get(`/admin/outbox/${failedId}`).set(bearer(DEMO_TOKENS.admin));
		expect(page.text).toContain('Not delivered');
		expect(page.text).toContain('mailbox unavailable');
		const retry = await request(app)
			.post(`/admin/outbox/${failedId}?/retry`)
			.set(bearer(DEMO_TOKENS.admin))
			.set('origin', ORIGIN())
			.type('form')
			.send('');
		expect(retry.status).toBe(200);
		const row = await getDb()
			.selectFrom('mail_messages')
			.select(['status', 'attempts'])
			.where('id', '=', failedId)
			.executeTakeFirstOrThrow();
		// Queued again (or already picked up and delivered to the fake server by a sender).
		expect(['queued', 'sent']).toContain(row.status);
	});

	it('is refused to every other role, and sends anonymous visitors to sign in', async () => {
		for (const who of ['manager', 'district', 'researcher'] as const) {
			for (const path of ['/admin/outbox', `/admin/outbox/${sentId}`]) {
				const res = await request(app).get(path).set(bearer(DEMO_TOKENS[who]));
				expect(res.status, `${who} ${path}`).toBe(403);
				expect(res.text).not.toContain('You are invited to Runnel');
			}
		}
		const anon = await request(app).get('/admin/outbox');
		expect(anon.status).toBe(303);
		expect(anon.headers.location).toMatch(/^\/sign-in\?next=/);
	});

	it('an unknown message is a 404', async () => {
		expect((await request(app).get('/admin/outbox/999999999').set(bearer(DEMO_TOKENS.admin))).status).toBe(404);
		expect((await request(app).get('/admin/outbox/abc').set(bearer(DEMO_TOKENS.admin))).status).toBe(404);
	});
});
