// An admin reads the outbox and a message, and registers an OAuth client, in Chromium with the real
// Content-Security-Policy on. (Sign-in pages come from the accounts area; here the browser carries
// the demo admin's API token, which authenticates pages as well.)
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, getDb } from '$lib/server/db';
import { queueMail } from '$lib/server/mail/queue';
import { processOnce } from '$lib/server/mail/sender';
import { composeMail } from '$lib/server/mail/template';
import { closeTransport } from '$lib/server/mail/transport';
import { bearer, DEMO_TOKENS, startApp } from '../helpers/app';
import { foreignRequests, launch, screenshot, seriousA11yViolations, type Browser } from '../helpers/browser';

let app: Awaited<ReturnType<typeof startApp>>;
let browser: Browser;
const cspViolations: string[] = [];
let subject: string;

beforeAll(async () => {
	app = await startApp();
	browser = await launch();
	await browser.context.setExtraHTTPHeaders(bearer(DEMO_TOKENS.admin));
	subject = `Returned record BLH-0042 needs a look (${new Date().toISOString().slice(11, 19)})`;
	const id = await queueMail(
		getDb(),
		composeMail('record-returned', ['mara.quillfeather@bluestem.example.org'], subject, {
			heading: 'A record was returned to your district',
			greeting: 'Hello Mara,',
			paragraphs: [
				'The state program returned record BLH-0042 (bioreactor, Hardin County) with this comment:',
				'“The drainage area looks ten times too large for the bed size; please check the units.”'
			],
			action: { label: 'Open the record', url: 'https://hub.example.org/records/BLH-0042' },
			footnote: 'You get this message because you report for Bluestem Hills Conservation District.'
		})
	);
	for (let i = 0; i < 50; i++) {
		await processOnce();
		const r = await getDb().selectFrom('mail_messages').select('status').where('id', '=', id).executeTakeFirstOrThrow();
		if (r.status === 'sent') break;
		await new Promise((res) => setTimeout(res, 100));
	}
	await getDb()
		.insertInto('mail_messages')
		.values({
			kind: 'batch-result',
			to_addresses: ['it@ospreyflats.example.org'],
			subject: 'Batch 19 results: 3 rows need fixing',
			text_body: 'Batch 19: 3 rows rejected.',
			html_body: null,
			status: 'failed',
			attempts: 6,
			last_error: 'ESOCKET: connect ECONNREFUSED 10.0.0.25:587'
		})
		.execute();
});
afterAll(async () => {
	await browser?.close();
	await app?.close();
	await closeTransport();
	await closeDb();
});

async function open(path: string): Promise<Page> {
	const page = await browser.newPage();
	page.on('console', (m) => {
		if (/Content Security Policy|Refused to/i.test(m.text())) cspViolations.push(`${path}: ${m.text()}`);
	});
	await page.goto(app.origin + path);
	await page.evaluate(() => document.fonts.ready);
	return page;
}

describe('Outbox in Chromium', () => {
	it('lists messages with their status, shows failures, and passes axe', async () => {
		const page = await open('/admin/outbox');
		expect(await page.getByRole('heading', { level: 1, name: 'Outbox' }).isVisible()).toBe(true);
		expect(await page.getByRole('link', { name: 'Outbox' }).getAttribute('aria-current')).toBe('page');
		expect(await page.getByRole('alert').textContent()).toMatch(/not delivered/);
		expect(await page.getByRole('link', { name: subject }).isVisible()).toBe(true);
		expect(await page.getByText('ESOCKET: connect ECONNREFUSED 10.0.0.25:587').first().isVisible()).toBe(true);
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'outbox-list');
		await page.close();
	});

	it('opens a message: HTML view in a sandboxed frame, text view, raw source', async () => {
		const page = await open('/admin/outbox');
		await page.getByRole('link', { name: subject }).click();
		await page.waitForURL(/\/admin\/outbox\/\d+$/);
		expect(await page.getByRole('heading', { level: 1 }).textContent()).toBe(subject);
		const frame = page.frameLocator('iframe[title="HTML body of the message"]');
		await frame.getByRole('heading', { name: 'A record was returned to your district' }).waitFor();
		expect(await frame.getByRole('link', { name: 'Open the record' }).getAttribute('href')).toBe(
			'https://hub.example.org/records/BLH-0042'
		);
		// The mail's own inline styles apply inside the frame (the page's CSP allows inline styles, not scripts).
		const buttonColour = await frame.getByRole('link', { name: 'Open the record' }).evaluate((a) => getComputedStyle(a).backgroundColor);
		expect(buttonColour).toBe('rgb(31, 81, 94)');
		expect(await page.locator('pre').first().textContent()).toContain('please check the units');
		expect(await page.getByText('by the local fake SMTP server').isVisible()).toBe(true);
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'outbox-message');
		await page.close();
	});

	it('a failed message is marked as not delivered and can be queued again', async () => {
		const page = await open('/admin/outbox?status=failed');
		await page.getByRole('link', { name: 'Batch 19 results: 3 rows need fixing' }).first().click();
		await page.waitForURL(/\/admin\/outbox\/\d+$/);
		expect(await page.getByRole('alert').textContent()).toMatch(/Not delivered.*6 attempts/s);
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'outbox-failed');
		await page.getByRole('button', { name: 'Queue again' }).click();
		await page.getByText('Queued again').waitFor();
		await page.close();
	});
});

describe('OAuth clients in Chromium', () => {
	it('registers a client and shows its secret once', async () => {
		const page = await open('/admin/oauth-clients');
		await page.getByLabel('Name', { exact: true }).fill('Osprey Flats nightly upload');
		await page.getByLabel('District', { exact: true }).selectOption({ label: 'Osprey Flats Conservation District (OSF)' });
		await page.getByRole('checkbox', { name: 'records:write' }).uncheck();
		await page.getByRole('button', { name: 'Register client' }).click();
		await page.getByRole('heading', { name: /registered/ }).waitFor();
		expect(await page.getByLabel('Client secret').inputValue()).toMatch(/^rnlcs_/);
		expect(await page.getByRole('cell', { name: 'records:read rollups:read' }).first().isVisible()).toBe(true);
		// The form is ready for the next client, with every scope ticked again.
		expect(await page.getByLabel('Name', { exact: true }).inputValue()).toBe('');
		for (const s of ['records:write', 'records:read', 'rollups:read'])
			expect(await page.getByRole('checkbox', { name: s }).isChecked()).toBe(true);
		expect(await seriousA11yViolations(page)).toEqual([]);
		await screenshot(page, 'oauth-clients');

		// Field errors beside the fields.
		await page.getByLabel('Name', { exact: true }).fill('');
		await page.getByRole('button', { name: 'Register client' }).click();
		await page.getByText('Give the client a name').waitFor();
		expect(await page.getByLabel('Name', { exact: true }).getAttribute('aria-invalid')).toBe('true');
		await page.close();
	});

	it('no page broke its Content-Security-Policy and nothing left 127.0.0.1', () => {
		expect(cspViolations).toEqual([]);
		expect(foreignRequests(browser.requests)).toEqual([]);
	});
});
