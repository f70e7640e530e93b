// The one mail layout: product name, text and HTML from the same content, nothing loaded from outside.
import { describe, expect, it } from 'vitest';
import { composeMail, renderMail } from '../../src/lib/server/mail/template';

const content = {
	heading: 'Reset your Runnel password',
	greeting: 'Hello Mara,',
	paragraphs: ['Someone asked to reset the password of this account.', 'If it was not you, ignore this message & <nothing> changes.'],
	action: { label: 'Choose a new password', url: 'https://hub.example.org/reset?token=abc&x=1' },
	footnote: 'The link works once and expires in 1 hour.'
};

describe('renderMail', () => {
	it('puts the same content, the product name and the link in both bodies', () => {
		const { text, html } = renderMail(content);
		for (const body of [text, html]) {
			expect(body).toContain('Runnel');
			expect(body).toContain('Hello Mara,');
			expect(body).toContain('The link works once and expires in 1 hour.');
		}
		expect(text).toContain('Choose a new password:\nhttps://hub.example.org/reset?token=abc&x=1\n');
		expect(text).toContain('ignore this message & <nothing> changes.');
		expect(html).toContain('href="https://hub.example.org/reset?token=abc&amp;x=1"');
		expect(html).toContain('ignore this message &amp; &lt;nothing&gt; changes.');
	});

	it('loads nothing from outside: no images, no remote stylesheets, fonts or scripts', () => {
		const { html } = renderMail(content);
		expect(html).not.toMatch(/<img|<link|<script|@import|url\(/i);
		// The only absolute URL is the action link.
		expect(html.match(/https?:\/\/[^\s"'<]+/g)?.every((u) => u.startsWith('https://hub.example.org/reset'))).toBe(true);
	});

	it('refuses action links that are not http(s)', () => {
		expect(() => renderMail({ ...content, action: { label: 'x', url: 'javascript:alert(1)' } })).toThrow(/http/);
	});

	it('composeMail builds what queueMail takes', () => {
		const m = composeMail('password-reset', ['mara@example.org'], 'Reset your password', content);
		expect(m).toMatchObject({ kind: 'password-reset', to: ['mara@example.org'], subject: 'Reset your password' });
		expect(m.text).toContain('Runnel');
		expect(m.html).toContain('<!doctype html>');
	});
});
